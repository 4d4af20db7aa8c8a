#pragma once
// A byte stream one instrument link runs over: a TCP socket or the master side of a
// pseudo-terminal, behind one small interface so the link logic exists once.

#include <cstddef>
#include <functional>

#include <asio.hpp>

namespace zout::sim {

class LinkStream {
 public:
  using Handler = std::function<void(const asio::error_code&, std::size_t)>;
  virtual ~LinkStream() = default;

  // As asio's async_read_some / async_write (all bytes) on the underlying stream.
  virtual void async_read_some(asio::mutable_buffer buffer, Handler handler) = 0;
  virtual void async_write(asio::const_buffer buffer, Handler handler) = 0;
  // Closes the stream; pending operations complete with operation_aborted.
  virtual void close() = 0;
};

// The adaptor for any asio stream (asio::ip::tcp::socket, asio::posix::stream_descriptor).
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
