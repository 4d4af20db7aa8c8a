#include "gnuplot_runner.h"

#include <fcntl.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <fmt/format.h>

#include <cerrno>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <vector>

extern char** environ;

namespace zout::report {
namespace {

// A file made with mkstemp in the temporary directory, removed when this goes away.
class TemporaryFile {
 public:
  explicit TemporaryFile(const char* stem) {
    std::string pattern = (std::filesystem::temp_directory_path() / (std::string(stem) + "-XXXXXX")).string();
    std::vector<char> name(pattern.begin(), pattern.end());
    name.push_back('\0');
    fd_ = ::mkstemp(name.data());
    if (fd_ < 0) throw GnuplotError(fmt::format("cannot create a temporary file {}: {}", pattern, std::strerror(errno)));
    path_ = name.data();
  }
  ~TemporaryFile() {
    if (fd_ >= 0) ::close(fd_);
    ::unlink(path_.c_str());
  }
  TemporaryFile(const TemporaryFile&) = delete;
  TemporaryFile& operator=(const TemporaryFile&) = delete;
  const std::string& path() const { return path_; }
  int fd() const { return fd_; }

 private:
  int fd_ = -1;
  std::string path_;
};

std::string last_lines(const std::string& text, std::size_t count) {
  std::vector<std::string> lines;
  std::istringstream in(text);
  for (std::string line; std::getline(in, line);) {
    if (!line.empty()) lines.push_back(line);
  }
  std::string out;
  for (std::size_t i = lines.size() > count ? lines.size() - count : 0; i < lines.size(); ++i) {
    out += (out.empty() ? "" : " | ") + lines[i];
  }
  return out;
}

}  // namespace

void run_gnuplot(const std::string& script, const std::string& command) {
  TemporaryFile script_file("zout-plot-script");
  TemporaryFile output_file("zout-plot-output");
  {
    std::ofstream out(script_file.path(), std::ios::binary);
    out << script;
    out.close();
    if (!out) throw GnuplotError(fmt::format("cannot write the gnuplot script to {}", script_file.path()));
  }

  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_addopen(&actions, STDIN_FILENO, "/dev/null", O_RDONLY, 0);
  posix_spawn_file_actions_adddup2(&actions, output_file.fd(), STDOUT_FILENO);
  posix_spawn_file_actions_adddup2(&actions, output_file.fd(), STDERR_FILENO);
  std::vector<std::string> args = {command, script_file.path()};
  std::vector<char*> argv;
  for (auto& a : args) argv.push_back(a.data());
  argv.push_back(nullptr);
  pid_t pid = 0;
  const int spawned = ::posix_spawnp(&pid, command.c_str(), &actions, nullptr, argv.data(), environ);
  posix_spawn_file_actions_destroy(&actions);
  if (spawned != 0) {
    throw GnuplotError(fmt::format("cannot run \"{}\": {}{}", command, std::strerror(spawned),
                                   spawned == ENOENT ? " (install gnuplot, Debian package gnuplot-nox)" : ""));
  }
  int status = 0;
  while (::waitpid(pid, &status, 0) < 0) {
    if (errno != EINTR) throw GnuplotError(fmt::format("waiting for \"{}\": {}", command, std::strerror(errno)));
  }
  if (WIFEXITED(status) && WEXITSTATUS(status) == 0) return;

  std::ifstream in(output_file.path(), std::ios::binary);
  std::ostringstream messages;
  messages << in.rdbuf();
  const std::string how = WIFEXITED(status) ? fmt::format("exit status {}", WEXITSTATUS(status))
                                            : fmt::format("signal {}", WTERMSIG(status));
  throw GnuplotError(fmt::format("\"{}\" failed on the plot script ({}): {}", command, how,
                                 last_lines(messages.str(), 4)));
}

}  // namespace zout::report
