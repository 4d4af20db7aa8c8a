#pragma once
// Builds the right Transport for a parsed address (tcp → TcpTransport, serial → SerialTransport).
// The transport is returned closed; open() connects it.

#include <memory>

#include "address.h"
#include "transport.h"

namespace zout {

std::unique_ptr<Transport> make_transport(const Address& address);

}  // namespace zout
