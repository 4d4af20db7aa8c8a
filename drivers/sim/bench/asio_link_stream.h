#pragma once
// LinkStream over any asio stream (asio::ip::tcp::socket, asio::posix::stream_descriptor).

#include <utility>

#include <asio.hpp>

#include "link_stream.h"

namespace zout::sim {

template <typename Stream>
class AsioLinkStream final : public LinkStream {
 public:
  explicit AsioLinkStream(Stream stream) : stream_(std::move(stream)) {}

  void async_read_some(asio::mutable_buffer buffer, Handler handler) override {
    stream_.async_read_some(buffer, std::move(handler));
  }
  void async_write(asio::const_buffer buffer, Handler handler) override {
    asio::async_write(stream_, buffer, std::move(handler));
  }
  void close() override {
    asio::error_code ignored;
    stream_.close(ignored);
  }

 private:
  Stream stream_;
};

}  // namespace zout::sim
