#include "control_server.h"

#include <array>
#include <deque>

#include <fmt/format.h>

namespace zout::sim {

class ControlServer::Session : public std::enable_shared_from_this<Session> {
 public:
  Session(asio::ip::tcp::socket socket, const Handler& handler) : socket_(std::move(socket)), handler_(handler) {}

  void start() { read_more(); }
  void close() {
    asio::error_code ignored;
    socket_.close(ignored);
  }

 private:
  void read_more() {
    socket_.async_read_some(asio::buffer(chunk_), [self = shared_from_this()](const asio::error_code& ec, std::size_t n) {
      if (ec) return;  // closed by the client or by stop()
      self->take(n);
      self->read_more();
    });
  }

  void take(std::size_t n) {
    for (std::size_t i = 0; i < n; ++i) {
      const char c = chunk_[i];
      if (c != '\n') {
        if (pending_.size() < max_line_bytes) pending_ += c;
        else too_long_ = true;
        continue;
      }
      if (!pending_.empty() && pending_.back() == '\r') pending_.pop_back();
      if (too_long_) {
        answer({{"ok", false}, {"error", fmt::format("request longer than {} bytes", max_line_bytes)}});
      } else if (!pending_.empty()) {
        answer(respond(pending_));
      }
      pending_.clear();
      too_long_ = false;
    }
  }

  nlohmann::json respond(const std::string& line) {
    nlohmann::json request;
    try {
      request = nlohmann::json::parse(line);
    } catch (const nlohmann::json::exception& e) {  // parse errors, numbers out of range
      return {{"ok", false}, {"error", fmt::format("not JSON: {}", e.what())}};
    }
    if (!request.is_object()) return {{"ok", false}, {"error", "a request must be a JSON object with \"op\""}};
    try {
      return handler_(request);
    } catch (const std::exception& e) {
      return {{"ok", false}, {"error", e.what()}};
    }
  }

  void answer(const nlohmann::json& reply) {
    const bool idle = out_.empty();
    // Invalid UTF-8 in an echoed value must not throw: replace it.
    out_.push_back(reply.dump(-1, ' ', false, nlohmann::json::error_handler_t::replace) + "\n");
    if (idle) write_next();
  }

  void write_next() {
    asio::async_write(socket_, asio::buffer(out_.front()), [self = shared_from_this()](const asio::error_code& ec, std::size_t) {
      if (ec) return;
      self->out_.pop_front();
      if (!self->out_.empty()) self->write_next();
    });
  }

  asio::ip::tcp::socket socket_;
  const Handler& handler_;
  std::array<char, 4096> chunk_{};
  std::string pending_;
  bool too_long_ = false;
  std::deque<std::string> out_;
};

ControlServer::ControlServer(asio::io_context& io, std::uint16_t port, Handler handler)
    : acceptor_(io), handler_(std::move(handler)) {
  const asio::ip::tcp::endpoint endpoint(asio::ip::address_v4::loopback(), port);
  acceptor_.open(endpoint.protocol());
  acceptor_.set_option(asio::ip::tcp::acceptor::reuse_address(true));
  acceptor_.bind(endpoint);
  acceptor_.listen();
  port_ = acceptor_.local_endpoint().port();
  accept();
}

ControlServer::~ControlServer() { stop(); }

void ControlServer::accept() {
  acceptor_.async_accept([this](const asio::error_code& ec, asio::ip::tcp::socket socket) {
    if (ec == asio::error::operation_aborted || !acceptor_.is_open()) return;
    if (!ec) {
      auto session = std::make_shared<Session>(std::move(socket), handler_);
      std::erase_if(sessions_, [](const std::weak_ptr<Session>& s) { return s.expired(); });
      sessions_.push_back(session);
      session->start();
    }
    accept();
  });
}

void ControlServer::stop() {
  asio::error_code ignored;
  acceptor_.close(ignored);
  for (auto& weak : sessions_) {
    if (auto session = weak.lock()) session->close();
  }
  sessions_.clear();
}

}  // namespace zout::sim
