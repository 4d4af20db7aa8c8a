#include "tcp_instrument_server.h"

#include "asio_link_stream.h"

namespace zout::sim {

TcpInstrumentServer::TcpInstrumentServer(asio::io_context& io, ScpiInstrument& instrument, const SimClock& clock,
                                         std::uint16_t port)
    : io_(io), instrument_(instrument), clock_(clock), acceptor_(io) {
  const asio::ip::tcp::endpoint endpoint(asio::ip::address_v4::loopback(), port);
  acceptor_.open(endpoint.protocol());
  acceptor_.set_option(asio::ip::tcp::acceptor::reuse_address(true));
  acceptor_.bind(endpoint);
  acceptor_.listen();
  port_ = acceptor_.local_endpoint().port();
  accept();
}

void TcpInstrumentServer::accept() {
  acceptor_.async_accept([this](const asio::error_code& ec, asio::ip::tcp::socket socket) {
    if (ec == asio::error::operation_aborted || !acceptor_.is_open()) return;
    if (!ec) {
      asio::error_code ignored;
      socket.set_option(asio::ip::tcp::no_delay(true), ignored);  // replies leave at once
      if (link_) link_->close();
      auto link = std::make_shared<InstrumentLink>(
          io_, std::make_unique<AsioLinkStream<asio::ip::tcp::socket>>(std::move(socket)), instrument_, clock_, nullptr);
      link_ = link;
      link->start();
    }
    accept();
  });
}

void TcpInstrumentServer::stop() {
  asio::error_code ignored;
  acceptor_.close(ignored);
  if (link_) link_->close();
  link_.reset();
}

}  // namespace zout::sim
