// The soak benchmark itself: codedriftd under sustained load on several streams and models for
// a set time, reloaded every so often (alternately POST /api/v1/reload and SIGHUP, swapping the
// deployed tables), alerting to a webhook that fails half the time; sampled every few seconds
// into a table, and judged at the end (counters equal what was sent, memory flat after the
// warm-up, alerts delivered, clean exit).
#pragma once

#include <map>
#include <memory>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "harness.h"
#include "ingest_load_daemon.h"
#include "ingest_load_net.h"
#include "soak_config.h"
#include "soak_report.h"
#include "soak_traffic.h"
#include "soak_webhook.h"

namespace codedrift::soak {

struct SoakOptions {
  std::string capture;     // the traffic (lines), sent in a loop
  std::string tables_dir;  // <stem>-a.table, <stem>-b.table (see soak_config.h)
  double seconds = 600;
  double sample_every = 10;
  double reload_every = 60;
  double first_reload = 60;  // seconds after the start of the first reload
  double udp_rate = 20000;   // datagrams per second
  double warmup = 120;       // resident memory is judged against the sample at this time
  double rss_bound = 0.10;   // allowed growth after the warm-up
  std::string evaluate_every = "2s";
};

// SIGINT and SIGTERM end the run early: the daemon is stopped (SIGTERM by its pid) before exit.
void InstallInterruptHandlers();
bool Interrupted();

// One soak run. Run() once; not thread-safe.
class SoakRun {
 public:
  explicit SoakRun(SoakOptions options);
  ~SoakRun();

  // 0: every check passed; 1: a check failed; 2: the soak could not be set up; 130: interrupted.
  int Run();

 private:
  Status Setup();
  Status StartSenders();
  void Loop();
  // Reads the daemon's VmRSS into the current interval's range (the loop calls it at every wake).
  void ReadRss();
  // Closes the interval: the scrape, and the interval's RSS range (with a read now).
  SamplePoint Sample(double seconds);
  // Compares `sample` with the last one kept; false when the daemon did not answer (the
  // sample is then not kept).
  bool CheckSample(const SamplePoint& sample);
  void Reload(int number, double at);
  void Finish();
  // What the connection-oriented senders sent, summed per stream.
  std::map<std::string, SentTotals> SentByStream() const;
  void Settle();
  void CheckCounters(const Scrape& last);
  void CheckAlerts(const Scrape& last);
  void PrintFigures();
  int LogCount(const std::string& text) const;

  struct Sender {
    std::string stream;
    std::unique_ptr<FlatOutSender> sender;
  };

  const SoakOptions options_;
  const std::vector<SoakStream> streams_;
  std::optional<bench::Capture> capture_;
  std::vector<Chunk> line_chunks_, frame_chunks_;
  testing::TempDir work_;  // admin token and the unix socket
  SoakConfigOptions config_;
  FlakyWebhookReceiver receiver_;
  std::unique_ptr<bench::BenchDaemon> daemon_;
  std::vector<Sender> senders_;
  std::unique_ptr<PacedUdpSender> udp_;
  uint16_t udp_port_ = 0;
  std::string token_;

  double started_ = 0;  // steady seconds when the senders started
  std::vector<SamplePoint> samples_;
  RssRange rss_interval_;  // VmRSS reads since the last sample
  int reloads_ = 0, http_reloads_ = 0, hup_reloads_ = 0, failed_reloads_ = 0;
  int dead_samples_ = 0, backwards_samples_ = 0, short_connection_samples_ = 0;
  bool daemon_died_ = false;
  Verdict verdict_;
};

}  // namespace codedrift::soak
