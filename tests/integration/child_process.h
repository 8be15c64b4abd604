// ChildProcess: a program the test starts directly (no shell), in its own process group, with
// stdout and stderr sent to files; the destructor ends the group by its id if still running.
// Header-only because the integration-test build compiles only *_test.cc and the harness.
// One instance per process, used from one thread.
#pragma once

#include <chrono>
#include <cstdlib>
#include <string>
#include <vector>

#include "harness.h"
#include <fcntl.h>
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

namespace codedrift::testing {

class ChildProcess {
 public:
  ChildProcess(std::vector<std::string> argv, const std::string& stdout_path,
               const std::string& stderr_path) {
    pid_ = ::fork();
    if (pid_ == 0) {
      ::setpgid(0, 0);  // its own group, so helpers it spawns end with it
      const int out = ::open(stdout_path.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0644);
      const int err = ::open(stderr_path.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0644);
      const int in = ::open("/dev/null", O_RDONLY);
      ::dup2(in, 0);
      ::dup2(out, 1);
      ::dup2(err, 2);
      std::vector<char*> args;
      for (auto& a : argv) args.push_back(a.data());
      args.push_back(nullptr);
      ::execvp(args[0], args.data());
      std::_Exit(127);
    }
    if (pid_ > 0) ::setpgid(pid_, pid_);  // also here, so no race with the child's own call
  }
  ChildProcess(const ChildProcess&) = delete;
  ChildProcess& operator=(const ChildProcess&) = delete;
  ~ChildProcess() { Kill(); }

  bool started() const { return pid_ > 0; }

  // Waits for the exit; returns its code (128 + signal when killed), or -1 after `timeout`
  // (the process group is then killed).
  int Wait(std::chrono::milliseconds timeout) {
    if (!WaitFor([this] { return !Running(); }, timeout)) {
      Kill();
      return -1;
    }
    return exit_code_;
  }

  // Ends the process group (SIGKILL) and reaps the child.
  void Kill() {
    if (pid_ <= 0 || !Running()) return;
    ::kill(-pid_, SIGKILL);
    int status = 0;
    ::waitpid(pid_, &status, 0);
    exit_code_ = 128 + SIGKILL;
  }

  bool Running() {
    if (exit_code_ >= 0) return false;
    int status = 0;
    if (::waitpid(pid_, &status, WNOHANG) == pid_) {
      exit_code_ = WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
      return false;
    }
    return true;
  }

 private:
  pid_t pid_ = -1;
  int exit_code_ = -1;
};

}  // namespace codedrift::testing
