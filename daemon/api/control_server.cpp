#include "control_server.h"

#include <sys/stat.h>
#include <unistd.h>

#include <deque>
#include <filesystem>
#include <iostream>

#include <fmt/format.h>

#include "daemon/plan/bounded_json.h"

namespace zout {

class ControlServer::Connection : public std::enable_shared_from_this<ControlServer::Connection> {
 public:
  Connection(ControlServer& server, asio::local::stream_protocol::socket socket)
      : server_(server), socket_(std::move(socket)), input_(max_request_bytes + 1) {}

  void start() { read_next(); }
  bool subscribed() const { return subscribed_; }

  void send(std::string line) {
    if (closed_) return;
    pending_bytes_ += line.size() + 1;
    if (pending_bytes_ > max_pending_bytes) {
      std::cerr << "zoutd: dropping a control client that is not reading its replies\n";
      close();
      return;
    }
    outbox_.push_back(std::move(line) + "\n");
    if (outbox_.size() == 1) write_next();
  }

  void close() {
    if (closed_) return;
    closed_ = true;
    asio::error_code ignored;
    socket_.close(ignored);
    server_.connections_.erase(shared_from_this());
  }

 private:
  void read_next() {
    auto self = shared_from_this();
    asio::async_read_until(socket_, input_, '\n', [this, self](const asio::error_code& ec, std::size_t length) {
      if (closed_) return;
      if (ec == asio::error::not_found) {
        // The line grew past the limit without a newline.
        send(safe_dump(rpc::make_error(nullptr, rpc::invalid_request,
                                       fmt::format("request refused: longer than {} bytes", max_request_bytes))));
        closing_after_write_ = true;
        return;
      }
      if (ec) {
        close();
        return;
      }
      std::string line(asio::buffers_begin(input_.data()), asio::buffers_begin(input_.data()) + static_cast<std::ptrdiff_t>(length));
      input_.consume(length);
      while (!line.empty() && (line.back() == '\n' || line.back() == '\r')) line.pop_back();
      if (!line.empty()) handle(line);
      read_next();
    });
  }

  // One line from the client: a request, or a batch of them (JSON-RPC 2.0 §6: an array in,
  // an array of the replies out, none for notifications). Whatever the line holds, the
  // outcome is this client's reply and nothing else: no exception leaves here, and replies
  // are written with invalid UTF-8 replaced (safe_dump), so echoing a client's bytes cannot throw.
  void handle(const std::string& line) noexcept {
    try {
      auto message = rpc::parse_message(line);
      if (message.index() == 1) {
        send(safe_dump(std::get<1>(message)));
        return;
      }
      const nlohmann::json& document = std::get<0>(message);
      if (!document.is_array()) {
        const nlohmann::json reply = answer(document);
        if (!reply.is_null()) send(safe_dump(reply));
        return;
      }
      if (document.empty()) {
        send(safe_dump(rpc::make_error(nullptr, rpc::invalid_request, "invalid request: an empty batch")));
        return;
      }
      nlohmann::json replies = nlohmann::json::array();
      for (const auto& element : document) {
        nlohmann::json reply = answer(element);
        if (!reply.is_null()) replies.push_back(std::move(reply));
      }
      if (!replies.empty()) send(safe_dump(replies));
    } catch (const std::exception& e) {
      try {
        send(safe_dump(rpc::make_error(nullptr, rpc::internal_error,
                                       std::string("internal error: ") + escaped_bytes(e.what()))));
      } catch (...) {  // not even the error could be sent: drop this client, keep the daemon
        close();
      }
    } catch (...) {
      close();
    }
  }

  // The reply to one request object; null for a notification.
  nlohmann::json answer(const nlohmann::json& document) {
    auto parsed = rpc::parse_request(document);
    if (auto* error = std::get_if<nlohmann::json>(&parsed)) return *error;
    const auto& request = std::get<rpc::Request>(parsed);
    CallContext context{[this] { subscribed_ = true; }};
    nlohmann::json response;
    try {
      response = rpc::make_result(request.id, server_.dispatch_(request, context));
    } catch (const rpc::RpcError& e) {
      response = rpc::make_error(request.id, e.code(), e.what(), e.data());
    } catch (const std::exception& e) {
      response = rpc::make_error(request.id, rpc::internal_error, std::string("internal error: ") + e.what());
    }
    return request.is_notification ? nlohmann::json() : response;
  }

  void write_next() {
    auto self = shared_from_this();
    asio::async_write(socket_, asio::buffer(outbox_.front()), [this, self](const asio::error_code& ec, std::size_t) {
      if (closed_) return;
      if (ec) {
        close();
        return;
      }
      pending_bytes_ -= outbox_.front().size();
      outbox_.pop_front();
      if (!outbox_.empty()) {
        write_next();
      } else if (closing_after_write_) {
        close();
      }
    });
  }

  ControlServer& server_;
  asio::local::stream_protocol::socket socket_;
  asio::streambuf input_;
  std::deque<std::string> outbox_;
  std::size_t pending_bytes_ = 0;
  bool subscribed_ = false;
  bool closed_ = false;
  bool closing_after_write_ = false;
};

ControlServer::ControlServer(asio::io_context& io, std::string socket_path, Dispatch dispatch)
    : io_(io), socket_path_(std::move(socket_path)), dispatch_(std::move(dispatch)), acceptor_(io),
      accept_retry_timer_(io) {}

ControlServer::~ControlServer() { stop(); }

void ControlServer::start() {
  namespace fs = std::filesystem;
  const fs::path path(socket_path_);
  if (!path.parent_path().empty()) fs::create_directories(path.parent_path());
  if (fs::exists(path)) {
    // A live daemon answers on it; a stale file from a crash does not.
    asio::local::stream_protocol::socket probe(io_);
    asio::error_code ec;
    probe.connect(asio::local::stream_protocol::endpoint(socket_path_), ec);
    if (!ec) throw std::runtime_error(fmt::format("control socket {} is in use by another zoutd", socket_path_));
    fs::remove(path);
  }
  acceptor_.open(asio::local::stream_protocol());
  acceptor_.bind(asio::local::stream_protocol::endpoint(socket_path_));
  acceptor_.listen();
  if (::chmod(socket_path_.c_str(), 0660) != 0) {
    throw std::runtime_error(fmt::format("cannot set mode 0660 on {}", socket_path_));
  }
  accept_next();
}

void ControlServer::stop() {
  asio::error_code ignored;
  accept_retry_timer_.cancel();
  if (acceptor_.is_open()) {
    acceptor_.close(ignored);
    std::filesystem::remove(socket_path_, ignored);
  }
  auto open = connections_;
  for (const auto& connection : open) connection->close();
}

void ControlServer::accept_next() {
  acceptor_.async_accept([this](const asio::error_code& ec, asio::local::stream_protocol::socket socket) {
    if (!acceptor_.is_open() || ec == asio::error::operation_aborted) return;  // stopped
    if (ec) {
      // Out of file descriptors (or another passing failure): keep the socket, try again
      // shortly, so the daemon answers again once clients have gone.
      if (!accept_failing_) std::cerr << "zoutd: cannot accept control connections: " << ec.message() << "; retrying\n";
      accept_failing_ = true;
      accept_retry_timer_.expires_after(accept_retry);
      accept_retry_timer_.async_wait([this](const asio::error_code& wait_error) {
        if (!wait_error) accept_next();
      });
      return;
    }
    if (accept_failing_) std::cerr << "zoutd: accepting control connections again\n";
    accept_failing_ = false;
    if (connections_.size() >= max_clients) {
      const std::string refusal =
          safe_dump(rpc::make_error(nullptr, rpc::refused,
                                    fmt::format("zoutd serves at most {} control clients at once; try again later",
                                                max_clients))) +
          "\n";
      asio::error_code ignored;
      socket.non_blocking(true, ignored);
      socket.write_some(asio::buffer(refusal), ignored);  // best effort; never waits
      socket.close(ignored);
    } else {
      auto connection = std::make_shared<Connection>(*this, std::move(socket));
      connections_.insert(connection);
      connection->start();
    }
    accept_next();
  });
}

void ControlServer::broadcast(const std::string& method, const nlohmann::json& params) {
  std::string line = safe_dump(rpc::make_notification(method, params));
  asio::post(io_, [this, line = std::move(line)] {
    auto open = connections_;
    for (const auto& connection : open) {
      if (connection->subscribed()) connection->send(line);
    }
  });
}

}  // namespace zout
