#include "sim_process.h"

#include <fcntl.h>
#include <poll.h>
#include <signal.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cerrno>
#include <stdexcept>
#include <thread>

extern char** environ;

namespace zout::test {

namespace {

std::chrono::milliseconds left_until(std::chrono::steady_clock::time_point deadline) {
  return std::chrono::duration_cast<std::chrono::milliseconds>(deadline - std::chrono::steady_clock::now());
}

}  // namespace

SimProcess::SimProcess(const std::vector<std::string>& argv, std::chrono::milliseconds timeout) {
  int out_pipe[2];
  if (::pipe2(out_pipe, O_CLOEXEC) != 0) throw std::runtime_error("pipe failed");
  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_adddup2(&actions, out_pipe[1], 1);
  posix_spawn_file_actions_addopen(&actions, 0, "/dev/null", O_RDONLY, 0);
  std::vector<char*> args;
  for (const auto& arg : argv) args.push_back(const_cast<char*>(arg.c_str()));
  args.push_back(nullptr);
  const int spawned = ::posix_spawn(&pid_, args[0], &actions, nullptr, args.data(), environ);
  posix_spawn_file_actions_destroy(&actions);
  ::close(out_pipe[1]);
  if (spawned != 0) {
    ::close(out_pipe[0]);
    throw std::runtime_error("cannot start " + argv.at(0));
  }
  running_ = true;
  out_fd_ = out_pipe[0];

  const auto deadline = std::chrono::steady_clock::now() + timeout;
  std::string received;
  for (;;) {
    const auto newline = received.find('\n');
    if (newline != std::string::npos) {
      ready_line_ = received.substr(0, newline);
      return;
    }
    const auto left = left_until(deadline);
    pollfd waiting{out_fd_, POLLIN, 0};
    const int ready = left.count() > 0 ? ::poll(&waiting, 1, static_cast<int>(left.count())) : 0;
    if (ready < 0 && errno == EINTR) continue;
    char chunk[4096];
    const ssize_t n = ready > 0 ? ::read(out_fd_, chunk, sizeof chunk) : -1;
    if (n > 0) {
      received.append(chunk, static_cast<std::size_t>(n));
      continue;
    }
    // Timed out, or stdout closed (the program exited): clean up and report.
    ::kill(pid_, SIGKILL);
    int status = 0;
    ::waitpid(pid_, &status, 0);
    running_ = false;
    ::close(out_fd_);
    out_fd_ = -1;
    throw std::runtime_error(argv.at(0) + (ready == 0 ? " printed no ready line in time" : " exited before its ready line") +
                             (received.empty() ? std::string() : "; it printed: " + received));
  }
}

SimProcess::~SimProcess() {
  if (running_) {
    // SIGTERM first, so the program can clean up (zout-sim removes its pty links); SIGKILL
    // when it has not gone within two seconds.
    try {
      terminate(SIGTERM, std::chrono::milliseconds(2000));
    } catch (const std::exception&) {
      // terminate() has killed it.
    }
  }
  if (out_fd_ >= 0) ::close(out_fd_);
}

int SimProcess::terminate(int signal_number, std::chrono::milliseconds timeout) {
  if (!running_) throw std::runtime_error("the process is not running");
  ::kill(pid_, signal_number);
  const auto deadline = std::chrono::steady_clock::now() + timeout;
  for (;;) {
    int status = 0;
    const pid_t done = ::waitpid(pid_, &status, WNOHANG);
    if (done == pid_) {
      running_ = false;
      return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
    }
    if (left_until(deadline).count() <= 0) {
      ::kill(pid_, SIGKILL);
      ::waitpid(pid_, &status, 0);
      running_ = false;
      throw std::runtime_error("the process did not exit after the signal");
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(5));
  }
}

}  // namespace zout::test
