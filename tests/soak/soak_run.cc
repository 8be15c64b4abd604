// Setting up the soak, the sampling loop and the reloads (soak_run.h); the end of the run and
// its checks are in soak_finish.cc.
#include "soak_run.h"

#include <atomic>
#include <chrono>
#include <csignal>
#include <cstdio>
#include <random>
#include <thread>

namespace codedrift::soak {
namespace {

std::atomic<bool> g_interrupted{false};

extern "C" void OnInterrupt(int) { g_interrupted = true; }

constexpr size_t kChunkBytes = 64 * 1024;
constexpr size_t kDatagramBytes = 200;

double SteadySeconds() {
  return std::chrono::duration<double>(std::chrono::steady_clock::now().time_since_epoch()).count();
}

}  // namespace

void InstallInterruptHandlers() {
  struct sigaction action {};
  action.sa_handler = OnInterrupt;
  sigemptyset(&action.sa_mask);
  ::sigaction(SIGINT, &action, nullptr);
  ::sigaction(SIGTERM, &action, nullptr);
}

bool Interrupted() { return g_interrupted.load(); }

SoakRun::SoakRun(SoakOptions options) : options_(std::move(options)), streams_(SoakStreams()) {}

// Whatever happened, the daemon gets SIGTERM (by its pid) before the senders are torn down.
SoakRun::~SoakRun() {
  if (daemon_ && daemon_->process().Running()) daemon_->Stop();
}

int SoakRun::Run() {
  if (auto ready = Setup(); !ready.ok()) {
    std::fprintf(stderr, "soak: %s\n", ready.error().message.c_str());
    if (daemon_) std::fprintf(stderr, "codedriftd log:\n%s\n", daemon_->Log().c_str());
    return 2;
  }
  Loop();
  if (Interrupted()) {
    std::fprintf(stderr, "soak: interrupted; stopping codedriftd (pid %d)\n",
                 static_cast<int>(daemon_->pid()));
    daemon_->Stop();
    return 130;
  }
  Finish();
  return verdict_.passed() ? 0 : 1;
}

Status SoakRun::Setup() {
  auto capture = bench::Capture::Load(options_.capture);
  if (!capture.ok()) return capture.error();
  capture_.emplace(std::move(capture).value());
  line_chunks_ = MakeChunks(*capture_, WireFraming::kLines, kChunkBytes);
  frame_chunks_ = MakeChunks(*capture_, WireFraming::kU16be, kChunkBytes);

  if (auto started = receiver_.Start(); !started.ok()) return started;
  std::mt19937_64 random(std::random_device{}());
  char token[40];
  std::snprintf(token, sizeof token, "soak-%016llx", static_cast<unsigned long long>(random()));
  token_ = token;
  work_.Write("admin.token", token_ + "\n");
  config_ = {.tables_dir = options_.tables_dir,
             .token_file = work_.File("admin.token"),
             .unix_path = work_.File("local.sock"),
             .webhook_port = receiver_.port(),
             .evaluate_every = options_.evaluate_every};

  daemon_ = std::make_unique<bench::BenchDaemon>(SoakConfigText(config_, 'a'));
  if (auto ready = daemon_->WaitReady(); !ready.ok()) return ready;
  std::printf(
      "codedriftd pid %d, http port %u, config %s (table set a); webhook receiver on "
      "port %u\n",
      static_cast<int>(daemon_->pid()), daemon_->process().http_port(),
      daemon_->dir().File("codedrift.yaml").c_str(), receiver_.port());
  return StartSenders();
}

Status SoakRun::StartSenders() {
  for (const SoakStream& stream : streams_) {
    if (stream.kind == StreamKind::kUdp) {
      udp_port_ = daemon_->port(stream.name);
      udp_ = std::make_unique<PacedUdpSender>(udp_port_, capture_->Datagrams(4096, kDatagramBytes),
                                              options_.udp_rate);
      if (auto started = udp_->Start(); !started.ok()) return started;
      continue;
    }
    const std::vector<Chunk>& chunks =
        stream.framing == WireFraming::kLines ? line_chunks_ : frame_chunks_;
    const std::string target = stream.kind == StreamKind::kUnix
                                   ? "unix:" + config_.unix_path
                                   : "tcp:" + std::to_string(daemon_->port(stream.name));
    for (int i = 0; i < stream.connections; ++i) {
      const size_t first =
          chunks.size() * static_cast<size_t>(i) / static_cast<size_t>(stream.connections);
      senders_.push_back({stream.name, std::make_unique<FlatOutSender>(target, chunks, first)});
      if (auto started = senders_.back().sender->Start(); !started.ok()) return started;
    }
  }
  started_ = SteadySeconds();
  return Ok{};
}

void SoakRun::Loop() {
  std::printf(
      "soak: %.0f s; TCP and unix senders flat out (TCP backpressure sets their rate: the\n"
      "highest rate the daemon sustains), UDP paced at %.0f datagrams/s of %zu bytes; a sample\n"
      "every %.0f s, a reload every %.0f s from %.0f s on (POST /api/v1/reload and SIGHUP in\n"
      "turn, swapping table sets a and b); webhook answers 500 to every other request\n\n",
      options_.seconds, options_.udp_rate, kDatagramBytes, options_.sample_every,
      options_.reload_every, options_.first_reload);
  PrintHeader(streams_);
  samples_.push_back(Sample(0));
  double next_sample = options_.sample_every;
  double next_reload = options_.first_reload;
  int reload_number = 0;
  for (;;) {
    const double now = SteadySeconds() - started_;
    if (Interrupted() || daemon_died_ || now >= options_.seconds) break;
    if (now >= next_reload && next_reload < options_.seconds) {
      Reload(++reload_number, now);
      next_reload += options_.reload_every;
      continue;
    }
    if (now >= next_sample) {
      if (SamplePoint sample = Sample(now); CheckSample(sample)) {
        PrintRow(streams_, samples_.back(), sample);
        samples_.push_back(std::move(sample));
      }
      next_sample += options_.sample_every;
      continue;
    }
    ReadRss();
    const double wake = std::min({next_sample, next_reload, options_.seconds});
    std::this_thread::sleep_for(  // pacing the schedule, not synchronising with anything
        std::chrono::duration<double>(std::min(wake - now, 0.25)));
  }
  // The last sample closes the run (unless one was just taken).
  const double end = SteadySeconds() - started_;
  if (!daemon_died_ && !Interrupted() && end - samples_.back().seconds > 1) {
    if (SamplePoint sample = Sample(end); CheckSample(sample)) {
      PrintRow(streams_, samples_.back(), sample);
      samples_.push_back(std::move(sample));
    }
  }
}

void SoakRun::ReadRss() {
  if (const uint64_t rss = daemon_->RssBytes(); rss > 0) rss_interval_.Add(rss);
}

SamplePoint SoakRun::Sample(double seconds) {
  SamplePoint sample;
  sample.seconds = seconds;
  ReadRss();
  sample.rss_bytes = rss_interval_.low();
  sample.rss_peak_bytes = rss_interval_.high();
  rss_interval_ = RssRange();
  sample.scrape =
      Scrape::Parse(testing::HttpCall(daemon_->process().http_port(), "GET", "/metrics").body);
  sample.reloads = reloads_;
  return sample;
}

bool SoakRun::CheckSample(const SamplePoint& sample) {
  if (!daemon_->process().Running() || !sample.scrape.ok()) {
    ++dead_samples_;
    daemon_died_ = !daemon_->process().Running();
    if (daemon_died_) {
      std::printf("codedriftd (pid %d) is gone at %.1f s; its log:\n%s\n",
                  static_cast<int>(daemon_->pid()), sample.seconds, daemon_->Log().c_str());
    } else {
      std::printf("%7.1f  GET /metrics did not answer\n", sample.seconds);
    }
    return false;
  }
  const SamplePoint& before = samples_.back();
  for (const SoakStream& stream : streams_) {
    const std::string label = "stream=\"" + stream.name + "\"";
    for (const char* name : {"codedrift_records_total", "codedrift_bytes_total"}) {
      if (sample.scrape.Value(name, {label}) < before.scrape.Value(name, {label})) {
        ++backwards_samples_;  // a counter reset: the daemon restarted or lost its counters
      }
    }
    if (stream.kind != StreamKind::kUdp && sample.scrape.Count("codedrift_connections", {label}) !=
                                               static_cast<uint64_t>(stream.connections)) {
      ++short_connection_samples_;
    }
  }
  return true;
}

int SoakRun::LogCount(const std::string& text) const {
  const std::string log = daemon_->Log();
  int count = 0;
  for (size_t at = log.find(text); at != std::string::npos; at = log.find(text, at + 1)) ++count;
  return count;
}

void SoakRun::Reload(int number, double at) {
  // Odd reloads deploy set b (the models fit again), even ones set a (they drift and alert).
  if (!daemon_->process().Running()) {
    daemon_died_ = true;
    return;
  }
  const char variant = number % 2 == 1 ? 'b' : 'a';
  const bool by_http = number % 2 == 1;
  const double t0 = SteadySeconds();
  daemon_->dir().Write("codedrift.yaml", SoakConfigText(config_, variant));
  bool ok = true;
  std::string how;
  if (by_http) {
    how = "POST /api/v1/reload";
    const testing::HttpReply reply =
        testing::HttpCall(daemon_->process().http_port(), "POST", "/api/v1/reload", "",
                          {"Authorization: Bearer " + token_});
    ok = reply.status == 200 && reply.body.find("\"reloaded\":true") != std::string::npos;
    if (!ok) how += " answered " + std::to_string(reply.status) + " " + reply.body;
    ++http_reloads_;
  } else {
    how = "SIGHUP";
    daemon_->process().Signal(SIGHUP);
    ++hup_reloads_;
  }
  // Every reload that succeeded logs "reloaded <config>"; then every swapped model must show
  // its table of the new set in the API.
  const std::string logged = "reloaded " + daemon_->dir().File("codedrift.yaml");
  ok = ok && testing::WaitFor([&] { return LogCount(logged) == number; }, std::chrono::seconds(20));
  if (!ok) how += " (no \"reloaded\" line in the log)";
  int switched = 0;
  for (const SoakStream& stream : streams_) {
    for (const SoakModel& model : stream.models) {
      const std::string want = TablePath(config_, model, variant);
      if (ok && testing::WaitFor(
                    [&] {
                      const auto json = daemon_->process().ModelJson(stream.name, model.name);
                      return json.is_object() && json.value("table", nlohmann::json()) == want;
                    },
                    std::chrono::seconds(10))) {
        ++switched;
      } else {
        ok = false;
      }
    }
  }
  ++reloads_;
  if (!ok) ++failed_reloads_;
  std::printf(
      "  -- reload %d at %.1f s by %s: table set %c, %d models on their new table, %s "
      "in %.0f ms\n",
      number, at, how.c_str(), variant, switched, ok ? "ok" : "FAILED",
      (SteadySeconds() - t0) * 1e3);
  std::fflush(stdout);
}

}  // namespace codedrift::soak
