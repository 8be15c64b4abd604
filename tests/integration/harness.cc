#include "harness.h"

#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <random>
#include <sstream>
#include <stdexcept>
#include <thread>

#include <arpa/inet.h>
#include <fcntl.h>
#include <netinet/in.h>
#include <signal.h>
#include <sys/socket.h>
#include <sys/un.h>
#include <sys/wait.h>
#include <unistd.h>

namespace codedrift::testing {
namespace fs = std::filesystem;

TempDir::TempDir() {
  std::string pattern = (fs::temp_directory_path() / "codedrift-test-XXXXXX").string();
  if (mkdtemp(pattern.data()) == nullptr) throw std::runtime_error("mkdtemp failed");
  path_ = pattern;
}

TempDir::~TempDir() {
  std::error_code ec;
  fs::remove_all(path_, ec);
}

void TempDir::Write(const std::string& name, const std::string& content) const {
  std::ofstream out(File(name), std::ios::binary | std::ios::trunc);
  out << content;
}

namespace {

int ConnectTcp(uint16_t port) {
  const int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in addr{};
  addr.sin_family = AF_INET;
  addr.sin_port = htons(port);
  addr.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  if (::connect(fd, reinterpret_cast<sockaddr*>(&addr), sizeof addr) != 0) {
    ::close(fd);
    return -1;
  }
  return fd;
}

void WriteAll(int fd, const std::string& bytes) {
  size_t done = 0;
  while (done < bytes.size()) {
    const ssize_t n = ::send(fd, bytes.data() + done, bytes.size() - done, MSG_NOSIGNAL);
    if (n <= 0) return;
    done += static_cast<size_t>(n);
  }
}

std::string ReadAll(int fd) {
  std::string out;
  char buffer[65536];
  for (;;) {
    const ssize_t n = ::recv(fd, buffer, sizeof buffer, 0);
    if (n <= 0) break;
    out.append(buffer, static_cast<size_t>(n));
  }
  return out;
}

// Half-closes and waits for the peer's close, so the peer has read everything.
void FinishStream(int fd) {
  ::shutdown(fd, SHUT_WR);
  ReadAll(fd);
  ::close(fd);
}

std::string ReadFile(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

}  // namespace

HttpReply HttpCall(uint16_t port, const std::string& method, const std::string& target,
                   const std::string& body, const std::vector<std::string>& headers) {
  HttpReply reply;
  const int fd = ConnectTcp(port);
  if (fd < 0) return reply;
  std::string request = method + " " + target + " HTTP/1.1\r\nHost: 127.0.0.1\r\n";
  for (const auto& h : headers) request += h + "\r\n";
  request += "Content-Length: " + std::to_string(body.size()) + "\r\nConnection: close\r\n\r\n";
  request += body;
  WriteAll(fd, request);
  const std::string raw = ReadAll(fd);
  ::close(fd);
  const size_t end = raw.find("\r\n\r\n");
  if (raw.size() < 12 || end == std::string::npos) return reply;
  reply.status = std::atoi(raw.substr(9, 3).c_str());
  reply.headers = raw.substr(0, end);
  reply.body = raw.substr(end + 4);
  return reply;
}

void SendTcp(uint16_t port, const std::string& bytes) {
  const int fd = ConnectTcp(port);
  if (fd < 0) throw std::runtime_error("connect failed");
  WriteAll(fd, bytes);
  FinishStream(fd);
}

void SendUnix(const std::string& path, const std::string& bytes) {
  const int fd = ::socket(AF_UNIX, SOCK_STREAM, 0);
  sockaddr_un addr{};
  addr.sun_family = AF_UNIX;
  std::strncpy(addr.sun_path, path.c_str(), sizeof addr.sun_path - 1);
  if (::connect(fd, reinterpret_cast<sockaddr*>(&addr), sizeof addr) != 0) {
    ::close(fd);
    throw std::runtime_error("unix connect failed");
  }
  WriteAll(fd, bytes);
  FinishStream(fd);
}

void SendUdp(uint16_t port, const std::vector<std::string>& datagrams) {
  const int fd = ::socket(AF_INET, SOCK_DGRAM, 0);
  sockaddr_in addr{};
  addr.sin_family = AF_INET;
  addr.sin_port = htons(port);
  addr.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  for (const auto& d : datagrams) {
    ::sendto(fd, d.data(), d.size(), 0, reinterpret_cast<sockaddr*>(&addr), sizeof addr);
  }
  ::close(fd);
}

CommandResult RunCommand(const std::string& command) {
  CommandResult result;
  FILE* pipe = ::popen(command.c_str(), "r");
  if (pipe == nullptr) return result;
  char buffer[4096];
  size_t n;
  while ((n = std::fread(buffer, 1, sizeof buffer, pipe)) > 0) result.out.append(buffer, n);
  const int status = ::pclose(pipe);
  result.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  return result;
}

bool WaitFor(const std::function<bool()>& condition, std::chrono::milliseconds timeout) {
  const auto deadline = std::chrono::steady_clock::now() + timeout;
  auto pause = std::chrono::milliseconds(5);
  while (std::chrono::steady_clock::now() < deadline) {
    if (condition()) return true;
    std::this_thread::sleep_for(pause);  // polling interval, not a synchronisation point
    pause = std::min(pause * 2, std::chrono::milliseconds(100));
  }
  return condition();
}

std::string DaemonPath() { return std::string(CODEDRIFT_BIN_DIR) + "/codedriftd"; }
std::string CliPath() { return std::string(CODEDRIFT_BIN_DIR) + "/codedrift"; }

std::string ProbeLines(uint64_t seed, int count) {
  std::mt19937_64 rng(seed);
  std::string out;
  for (int i = 0; i < count; ++i) {
    out += "probe=" + std::to_string(rng() % 40) + " moisture=" + std::to_string(rng() % 100) +
           "." + std::to_string(rng() % 10) + " temp=" + std::to_string(5 + rng() % 25) +
           (rng() % 7 == 0 ? " batt=low" : " ok") + "\n";
  }
  return out;
}

DaemonProcess::DaemonProcess(const TempDir& dir, const std::string& config_yaml,
                             const std::vector<std::string>& extra_args)
    : dir_(dir.path()), ready_file_(dir.File("ready.json")), log_file_(dir.File("daemon.log")) {
  dir.Write("codedrift.yaml", config_yaml);
  std::error_code ec;
  fs::remove(ready_file_, ec);
  std::vector<std::string> args = {DaemonPath(), "--config", dir.File("codedrift.yaml"),
                                   "--ready-file", ready_file_};
  args.insert(args.end(), extra_args.begin(), extra_args.end());
  pid_ = ::fork();
  if (pid_ == 0) {
    const int log = ::open(log_file_.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0644);
    ::dup2(log, 2);
    ::dup2(log, 1);
    std::vector<char*> argv;
    for (auto& a : args) argv.push_back(a.data());
    argv.push_back(nullptr);
    ::execv(argv[0], argv.data());
    std::_Exit(127);
  }
}

DaemonProcess::~DaemonProcess() {
  if (pid_ > 0 && exit_code_ < 0 && Running()) {
    ::kill(pid_, SIGKILL);
    ::waitpid(pid_, nullptr, 0);
  }
}

bool DaemonProcess::Running() {
  if (exit_code_ >= 0) return false;
  int status = 0;
  const pid_t done = ::waitpid(pid_, &status, WNOHANG);
  if (done == pid_) {
    exit_code_ = WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
    return false;
  }
  return true;
}

bool DaemonProcess::WaitReady(std::chrono::milliseconds timeout) {
  const bool ready = WaitFor([&] { return fs::exists(ready_file_) || !Running(); }, timeout);
  if (!ready || !fs::exists(ready_file_)) return false;
  ports_ = nlohmann::json::parse(ReadFile(ready_file_));
  http_port_ = ports_.at("http_port").get<uint16_t>();
  return true;
}

uint16_t DaemonProcess::stream_port(const std::string& stream) const {
  return ports_.at("streams").at(stream).get<uint16_t>();
}

void DaemonProcess::Signal(int signal_number) const { ::kill(pid_, signal_number); }

int DaemonProcess::Stop(int signal_number, std::chrono::milliseconds timeout) {
  Signal(signal_number);
  if (!WaitFor([&] { return !Running(); }, timeout)) return -1;
  return exit_code_;
}

std::string DaemonProcess::Log() const { return ReadFile(log_file_); }

nlohmann::json DaemonProcess::ModelJson(const std::string& stream, const std::string& model) const {
  const HttpReply reply = HttpCall(http_port_, "GET", "/api/v1/models/" + stream + "/" + model);
  if (reply.status != 200) return nullptr;
  return nlohmann::json::parse(reply.body, nullptr, false);
}

std::optional<double> DaemonProcess::Metric(const std::string& name,
                                            const std::vector<std::string>& labels) const {
  const HttpReply reply = HttpCall(http_port_, "GET", "/metrics");
  std::istringstream lines(reply.body);
  std::string line;
  while (std::getline(lines, line)) {
    if (line.empty() || line[0] == '#') continue;
    const size_t name_end = line.find_first_of("{ ");
    if (name_end == std::string::npos || line.compare(0, name_end, name) != 0 ||
        name.size() != name_end) {
      continue;
    }
    const size_t value_at = line.rfind(' ');
    const std::string series = line.substr(0, value_at);
    bool all = true;
    for (const auto& label : labels) all = all && series.find(label) != std::string::npos;
    if (all) return std::strtod(line.c_str() + value_at + 1, nullptr);
  }
  return std::nullopt;
}

}  // namespace codedrift::testing
