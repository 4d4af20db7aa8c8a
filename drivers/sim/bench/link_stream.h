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

}  // namespace zout::sim
