#include "tcp_transport.h"

#include <fmt/format.h>

#include "io_error.h"

namespace zout {

TcpTransport::TcpTransport(Address address)
    : address_(std::move(address)),
      endpoint_(std::get<TcpEndpoint>(address_.endpoint)),
      socket_(io_),
      framer_(address_.framing) {}

TcpTransport::~TcpTransport() { close(); }

bool TcpTransport::run_until(const bool& done, Deadline deadline) {
  io_.restart();
  while (!done && io_.run_one_until(deadline) > 0) {
  }
  if (done) return true;
  // Deadline passed: cancel whatever is pending and let its handler run to completion so
  // no handler outlives this call.
  asio::error_code ignored;
  socket_.cancel(ignored);
  io_.restart();
  io_.run();
  return false;
}

void TcpTransport::fail(IoErrorKind kind, const std::string& what) {
  throw IoError(kind, fmt::format("{}: {}", address_.text, what));
}

void TcpTransport::open(Deadline deadline) {
  close();
  asio::ip::tcp::resolver resolver(io_);
  asio::error_code resolve_error;
  asio::ip::tcp::resolver::results_type endpoints;
  bool resolved = false;
  resolver.async_resolve(endpoint_.host, std::to_string(endpoint_.port),
                         [&](const asio::error_code& ec, asio::ip::tcp::resolver::results_type results) {
                           resolve_error = ec;
                           endpoints = std::move(results);
                           resolved = true;
                         });
  if (!run_until(resolved, deadline)) {
    resolver.cancel();
    io_.restart();
    io_.run();
    fail(IoErrorKind::timeout, fmt::format("could not resolve host {} before the deadline", endpoint_.host));
  }
  if (resolve_error) {
    fail(IoErrorKind::open_failed, fmt::format("cannot resolve host {}: {}", endpoint_.host, resolve_error.message()));
  }

  asio::error_code connect_error;
  bool connected = false;
  asio::async_connect(socket_, endpoints, [&](const asio::error_code& ec, const asio::ip::tcp::endpoint&) {
    connect_error = ec;
    connected = true;
  });
  if (!run_until(connected, deadline)) {
    close();
    fail(IoErrorKind::timeout, "connect timed out");
  }
  if (connect_error) {
    close();
    fail(IoErrorKind::open_failed, fmt::format("cannot connect: {}", connect_error.message()));
  }
  asio::error_code ignored;
  socket_.set_option(asio::ip::tcp::no_delay(true), ignored);
  socket_.set_option(asio::socket_base::keep_alive(true), ignored);
  framer_.clear();
}

void TcpTransport::close() noexcept {
  asio::error_code ignored;
  if (socket_.is_open()) {
    socket_.shutdown(asio::ip::tcp::socket::shutdown_both, ignored);
    socket_.close(ignored);
  }
  framer_.clear();
}

void TcpTransport::write_message(std::string_view message, Deadline deadline) {
  if (!is_open()) fail(IoErrorKind::disconnected, "not connected");
  std::string framed(message);
  framed += framer_.terminator();
  asio::error_code write_error;
  bool written = false;
  asio::async_write(socket_, asio::buffer(framed), [&](const asio::error_code& ec, std::size_t) {
    write_error = ec;
    written = true;
  });
  if (!run_until(written, deadline)) {
    close();  // part of the message may have gone out; the stream is no longer in step
    fail(IoErrorKind::timeout, fmt::format("write of \"{}\" timed out", escape_bytes(message)));
  }
  if (write_error) {
    close();
    fail(IoErrorKind::disconnected, fmt::format("write failed: {}", write_error.message()));
  }
}

std::string TcpTransport::read_line(Deadline deadline) {
  if (!is_open()) fail(IoErrorKind::disconnected, "not connected");
  for (;;) {
    if (auto line = framer_.next_line()) return std::move(*line);
    asio::error_code read_error;
    std::size_t received = 0;
    bool done = false;
    socket_.async_read_some(asio::buffer(chunk_), [&](const asio::error_code& ec, std::size_t n) {
      read_error = ec;
      received = n;
      done = true;
    });
    if (!run_until(done, deadline)) {
      const auto pending = framer_.pending();
      fail(IoErrorKind::timeout,
           pending.empty() ? std::string("no reply before the deadline")
                           : fmt::format("reply incomplete at the deadline (got \"{}\" without a terminator)",
                                         escape_bytes(pending)));
    }
    if (received > 0) {
      try {
        framer_.append(std::string_view(chunk_.data(), received));
      } catch (const IoError& e) {
        close();  // the rest of the over-long line would follow; start afresh on reconnect
        fail(e.kind(), e.what());
      }
    }
    if (read_error) {
      const std::string pending = escape_bytes(framer_.pending());
      close();
      if (read_error == asio::error::eof) {
        fail(IoErrorKind::disconnected,
             pending.empty() ? std::string("connection closed by the instrument")
                             : fmt::format("connection closed in the middle of a reply (got \"{}\")", pending));
      }
      fail(IoErrorKind::disconnected, fmt::format("read failed: {}", read_error.message()));
    }
  }
}

void TcpTransport::discard_input() {
  framer_.clear();
  if (!is_open()) return;
  asio::error_code ec;
  while (socket_.available(ec) > 0 && !ec) {
    socket_.read_some(asio::buffer(chunk_), ec);
    if (ec) break;
  }
}

}  // namespace zout
