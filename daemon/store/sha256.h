#pragma once
// SHA-256 (FIPS 180-4) of a byte string, for the content hash of a plan. Written here
// because none of the project's dependencies offers it; checked against the FIPS examples
// and coreutils sha256sum in tests/reference/store_sha256_test.cpp.

#include <string>
#include <string_view>

namespace zout::store {

// The digest of `bytes` as 64 lower-case hex digits.
std::string sha256_hex(std::string_view bytes);

}  // namespace zout::store
