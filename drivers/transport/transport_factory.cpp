#include "transport_factory.h"

#include "serial_transport.h"
#include "tcp_transport.h"

namespace zout {

std::unique_ptr<Transport> make_transport(const Address& address) {
  if (std::holds_alternative<TcpEndpoint>(address.endpoint)) return std::make_unique<TcpTransport>(address);
  return std::make_unique<SerialTransport>(address);
}

}  // namespace zout
