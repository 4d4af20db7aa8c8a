// The plan content hash against outside references: the SHA-256 examples of FIPS 180-2
// (appendix B; digests quoted from memory) and GNU coreutils sha256sum, run as a process on
// messages whose lengths straddle the padding boundaries (55, 56, 63, 64, 119, 120 bytes...).
#include <catch2/catch.hpp>

#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <random>

#include "daemon/store/sha256.h"
#include "tests/support/child_process.h"

using zout::store::sha256_hex;
using namespace std::chrono_literals;
namespace fs = std::filesystem;

TEST_CASE("SHA-256 gives the FIPS 180-2 example digests", "[store]") {
  REQUIRE(sha256_hex("abc") == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  REQUIRE(sha256_hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq") ==
          "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
  REQUIRE(sha256_hex(std::string(1'000'000, 'a')) == "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
  REQUIRE(sha256_hex("") == "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
}

TEST_CASE("SHA-256 agrees with coreutils sha256sum at every padding boundary", "[store]") {
  const fs::path file = fs::temp_directory_path() / ("zout-sha256-" + std::to_string(::getpid()));
  std::mt19937 random(7);
  for (const std::size_t length : {1u, 3u, 55u, 56u, 57u, 63u, 64u, 65u, 119u, 120u, 127u, 128u, 129u, 1000u, 4099u}) {
    std::string bytes(length, '\0');
    for (auto& byte : bytes) byte = static_cast<char>(random() & 0xFF);
    std::ofstream(file, std::ios::binary) << bytes;
    const auto r = zout::test::run_child({"/usr/bin/sha256sum", file.string()}, 10s);
    INFO("length " << length);
    REQUIRE(r.exit_code == 0);
    REQUIRE(r.out.substr(0, 64) == sha256_hex(bytes));
  }
  fs::remove(file);
}
