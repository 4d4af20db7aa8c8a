#pragma once
// Scratch files for tests: a fresh directory under the system temporary directory, and a
// whole file read back as bytes.

#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

namespace zout::test {

// Creates <tmp>/<stem>-<pid>-<n> (emptied first if it was left over) and removes it, with
// everything in it, on destruction.
class TempDir {
 public:
  explicit TempDir(const std::string& stem) {
    static int counter = 0;
    path = std::filesystem::temp_directory_path() /
           (stem + "-" + std::to_string(::getpid()) + "-" + std::to_string(counter++));
    std::filesystem::remove_all(path);
    std::filesystem::create_directories(path);
  }
  ~TempDir() {
    std::error_code ignored;
    std::filesystem::remove_all(path, ignored);
  }
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;

  std::filesystem::path path;
};

// The file's bytes; empty when it cannot be read.
inline std::string file_bytes(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream bytes;
  bytes << in.rdbuf();
  return bytes.str();
}

}  // namespace zout::test
