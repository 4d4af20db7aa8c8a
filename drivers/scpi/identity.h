#pragma once
// The reply to *IDN?: IEEE 488.2 §10.14 defines exactly four comma-separated fields:
// manufacturer, model, serial number ("0" when there is none) and firmware level.

#include <string>
#include <string_view>

namespace zout {

struct Identity {
  std::string manufacturer;
  std::string model;
  std::string serial_number;
  std::string firmware;
};

// Parses a *IDN? reply. Fields are trimmed. Fewer than four fields, or an empty
// manufacturer or model, is an IoError(protocol) quoting the reply. Commas after the third
// belong to the firmware field (some instruments list several firmware parts).
Identity parse_identity(std::string_view reply);

}  // namespace zout
