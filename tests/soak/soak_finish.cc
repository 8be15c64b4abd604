// The end of a soak run (soak_run.h): stop the senders, let the daemon's counters settle,
// check them against what was sent, check alerts, webhooks, proposals, checkpoints and
// resident memory, then SIGTERM the daemon and require exit code 0.
#include <algorithm>
#include <chrono>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <map>
#include <thread>

#include "codedrift/config_values.h"

#include "soak_run.h"

namespace codedrift::soak {
namespace {

namespace fs = std::filesystem;

std::string Label(const std::string& key, const std::string& value) {
  return key + "=\"" + value + "\"";
}

unsigned long long U(uint64_t value) { return static_cast<unsigned long long>(value); }

std::string Text(const char* format, auto... values) {
  char text[512];
  std::snprintf(text, sizeof text, format, values...);
  return text;
}

size_t FilesUnder(const std::string& dir, const std::string& extension) {
  std::error_code ec;
  size_t count = 0;
  for (auto it = fs::recursive_directory_iterator(dir, ec);
       !ec && it != fs::recursive_directory_iterator(); it.increment(ec)) {
    if (it->is_regular_file() && it->path().extension() == extension) ++count;
  }
  return count;
}

double Median(std::vector<double> values) {
  if (values.empty()) return 0;
  std::sort(values.begin(), values.end());
  return values[values.size() / 2];
}

}  // namespace

void SoakRun::Finish() {
  if (daemon_died_) {  // nothing left to compare with: say so at once
    std::printf("\nchecks\n");
    verdict_.Check(false, Text("codedriftd (pid %d) ran throughout: it exited during the run",
                               static_cast<int>(daemon_->pid())));
    std::printf("\nverdict: FAIL (codedriftd exited during the run)\n");
    return;
  }
  std::printf("\nstopping the senders; waiting for the daemon's counters to settle\n");
  std::vector<std::string> errors;
  for (Sender& s : senders_) {
    const std::string error = s.sender->Stop();
    if (!error.empty()) errors.push_back(s.stream + ": " + error);
  }
  if (udp_) udp_->Stop();
  Settle();

  const Scrape last =
      Scrape::Parse(testing::HttpCall(daemon_->process().http_port(), "GET", "/metrics").body);
  std::printf("\nchecks\n");
  verdict_.Check(!daemon_died_ && dead_samples_ == 0 && backwards_samples_ == 0 && last.ok(),
                 Text("codedriftd (pid %d) ran throughout: answered every sample, no counter "
                      "went backwards (no restart)",
                      static_cast<int>(daemon_->pid())));
  verdict_.Check(reloads_ > 0 && failed_reloads_ == 0,
                 Text("every reload succeeded: %d of %d (%d POST /api/v1/reload, %d SIGHUP), each "
                      "logged, every model on its new table",
                      reloads_ - failed_reloads_, reloads_, http_reloads_, hup_reloads_));
  verdict_.Check(
      errors.empty() && short_connection_samples_ == 0,
      Text("the %zu sender connections stayed open all run and ended cleanly%s%s", senders_.size(),
           errors.empty() ? "" : ": ", errors.empty() ? "" : errors.front().c_str()));
  CheckCounters(last);
  CheckAlerts(last);

  const RssJudgement rss = JudgeRss(samples_, options_.warmup);
  const double hwm_mb = static_cast<double>(daemon_->PeakRssBytes()) / 1e6;
  if (rss.judged) {
    verdict_.Check(
        rss.growth <= options_.rss_bound,
        Text("resident memory flat after the warm-up: median of the interval floors %.1f MB in "
             "the minute from %.0f s, %.1f MB in the last minute: %+.1f%% (bound %+.0f%%); "
             "highest read %.1f MB, VmHWM %.1f MB",
             rss.reference_mb, rss.reference_at, rss.final_mb, rss.growth * 100,
             options_.rss_bound * 100, rss.peak_mb, hwm_mb));
  } else {
    std::printf(
        "  %-6s resident memory: not judged, the run is too short for a %.0f s warm-up "
        "and two separate minutes after it (highest read %.1f MB, VmHWM %.1f MB)\n",
        "-", options_.warmup, rss.peak_mb, hwm_mb);
  }

  const int code = daemon_->Stop();
  verdict_.Check(code == 0, Text("SIGTERM: codedriftd exited with %d", code));
  receiver_.Stop();
  PrintFigures();
  if (!verdict_.passed()) {
    const std::string log = daemon_->Log();
    std::printf("\ncodedriftd log (last 4000 bytes):\n%s\n",
                log.substr(log.size() > 4000 ? log.size() - 4000 : 0).c_str());
  }
  std::printf("\nverdict: %s\n", verdict_.passed()
                                     ? "PASS"
                                     : Text("FAIL (%d check%s failed)", verdict_.failures(),
                                            verdict_.failures() == 1 ? "" : "s")
                                           .c_str());
}

std::map<std::string, SentTotals> SoakRun::SentByStream() const {
  std::map<std::string, SentTotals> sent;
  for (const Sender& s : senders_) {
    SentTotals& total = sent[s.stream];
    const SentTotals one = s.sender->totals();
    total.bytes += one.bytes;
    total.records += one.records;
    total.payload += one.payload;
  }
  return sent;
}

// Waits until the connection-oriented streams counted what was sent and the UDP stream counted
// what arrived (sent minus the kernel's drops), or until nothing moved for 3 s; then for two
// more evaluations, which publish the models' symbol counts.
void SoakRun::Settle() {
  const auto scrape = [&] {
    return Scrape::Parse(testing::HttpCall(daemon_->process().http_port(), "GET", "/metrics").body);
  };
  const std::map<std::string, SentTotals> sent = SentByStream();
  const auto settled = [&](const Scrape& now) {
    for (const auto& [stream, total] : sent) {
      if (now.Count("codedrift_records_total", {Label("stream", stream)}) != total.records ||
          now.Count("codedrift_bytes_total", {Label("stream", stream)}) != total.bytes) {
        return false;
      }
    }
    if (!udp_) return true;
    const int64_t drops = UdpSocketDrops(udp_port_);
    return drops >= 0 && now.Count("codedrift_records_total", {Label("stream", "packets")}) +
                                 static_cast<uint64_t>(drops) ==
                             udp_->totals().records;
  };
  Scrape now = scrape();
  std::string last_text;
  auto still_since = std::chrono::steady_clock::now();
  while (!settled(now) &&
         std::chrono::steady_clock::now() - still_since < std::chrono::seconds(3)) {
    std::this_thread::sleep_for(std::chrono::milliseconds(200));  // polling interval
    Scrape next = scrape();
    bool moved = false;
    for (const SoakStream& s : streams_) {
      moved = moved || next.Count("codedrift_records_total", {Label("stream", s.name)}) !=
                           now.Count("codedrift_records_total", {Label("stream", s.name)});
    }
    if (moved) still_since = std::chrono::steady_clock::now();
    now = std::move(next);
  }
  const uint64_t evaluations = now.Evaluations().count;
  testing::WaitFor([&] { return scrape().Evaluations().count >= evaluations + 2; },
                   std::chrono::seconds(60));
}

void SoakRun::CheckCounters(const Scrape& last) {
  std::map<std::string, SentTotals> sent = SentByStream();
  for (const SoakStream& stream : streams_) {
    const std::string label = Label("stream", stream.name);
    const uint64_t records = last.Count("codedrift_records_total", {label});
    const uint64_t bytes = last.Count("codedrift_bytes_total", {label});
    uint64_t payload = bytes;
    if (stream.kind != StreamKind::kUdp) {
      const SentTotals& want = sent[stream.name];
      payload = want.payload;
      verdict_.Check(
          records == want.records && bytes == want.bytes,
          Text("%s: codedrift_records_total %llu = sent %llu, codedrift_bytes_total "
               "%llu = sent %llu",
               stream.name.c_str(), U(records), U(want.records), U(bytes), U(want.bytes)));
    } else {
      const SentTotals want = udp_->totals();
      const int64_t drops = UdpSocketDrops(udp_port_);
      verdict_.Check(drops >= 0 && records + static_cast<uint64_t>(drops) == want.records &&
                         bytes == records * 200,
                     Text("%s: codedrift_records_total %llu + kernel drops %lld = sent %llu; "
                          "codedrift_bytes_total %llu = 200 x records",
                          stream.name.c_str(), U(records), static_cast<long long>(drops),
                          U(want.records), U(bytes)));
      if (drops > 0) {
        std::printf(
            "  %-6s %s: UDP lost %lld of %llu datagrams (%.3f%%) at %.0f/s beside "
            "flat-out TCP; UDP is paced, not guaranteed lossless under full load\n",
            "note", stream.name.c_str(), static_cast<long long>(drops), U(want.records),
            100.0 * static_cast<double>(drops) / static_cast<double>(want.records),
            options_.udp_rate);
      }
    }
    uint64_t rejected = 0;
    for (const char* reason :
         {"overlong", "oversized_frame", "truncated_frame", "oversized_datagram", "not_allowed"}) {
      rejected += last.Count("codedrift_records_rejected_total", {label, Label("reason", reason)});
    }
    verdict_.Check(rejected == 0,
                   Text("%s: no record rejected (%llu)", stream.name.c_str(), U(rejected)));
    for (const SoakModel& model : stream.models) {
      if (!model.counts_payload) continue;
      const uint64_t symbols =
          last.Count("codedrift_symbols_total", {label, Label("model", model.name)});
      verdict_.Check(symbols == payload,
                     Text("%s/%s: codedrift_symbols_total %llu = record bytes %llu",
                          stream.name.c_str(), model.name.c_str(), U(symbols), U(payload)));
    }
  }
}

void SoakRun::CheckAlerts(const Scrape& last) {
  const auto delivered = [&](const Scrape& s) {
    return s.Count("codedrift_webhook_deliveries_total", {"result=\"delivered\""});
  };
  // Every alert is one webhook notice: wait for the queue to drain.
  Scrape now = last;
  testing::WaitFor(
      [&] {
        now = Scrape::Parse(
            testing::HttpCall(daemon_->process().http_port(), "GET", "/metrics").body);
        return now.Count("codedrift_webhook_queue") == 0 &&
               static_cast<uint64_t>(now.Sum("codedrift_alerts_total")) ==
                   delivered(now) +
                       now.Count("codedrift_webhook_deliveries_total", {"result=\"dropped\""}) &&
               receiver_.answered_ok() == delivered(now);
      },
      std::chrono::seconds(60));
  const auto alerts = static_cast<uint64_t>(now.Sum("codedrift_alerts_total"));
  const uint64_t ok = delivered(now);
  const uint64_t failed =
      now.Count("codedrift_webhook_deliveries_total", {"result=\"failed_attempt\""});
  const uint64_t dropped = now.Count("codedrift_webhook_deliveries_total", {"result=\"dropped\""});
  verdict_.Check(alerts > 0,
                 Text("alerts fired: codedrift_alerts_total %llu over all models", U(alerts)));
  verdict_.Check(ok > 0 && failed > 0 && dropped == 0,
                 Text("webhook: %llu delivered, %llu failed attempts (retried), %llu dropped",
                      U(ok), U(failed), U(dropped)));
  verdict_.Check(
      alerts == ok && receiver_.answered_ok() == ok && receiver_.distinct_delivered() == ok &&
          receiver_.answered_failed() <= failed && receiver_.malformed() == 0,
      Text("every alert delivered once: alerts %llu = delivered %llu = receiver's "
           "2xx %llu (%llu distinct deliveries); receiver's 500s %llu <= failed "
           "attempts; %llu malformed",
           U(alerts), U(ok), U(receiver_.answered_ok()), U(receiver_.distinct_delivered()),
           U(receiver_.answered_failed()), U(receiver_.malformed())));
  const std::string state = daemon_->dir().File("state");
  const size_t proposals = FilesUnder(state + "/proposals", ".table");
  verdict_.Check(proposals > 0 && now.Count("codedrift_proposal_failures_total") == 0,
                 Text("proposals written: %zu table files (the newest 10 per model are kept), "
                      "codedrift_proposal_failures_total %llu",
                      proposals, U(now.Count("codedrift_proposal_failures_total"))));
  size_t models = 0;
  for (const SoakStream& s : streams_) models += s.models.size();
  const size_t checkpoints = FilesUnder(state + "/checkpoints", ".ckpt");
  verdict_.Check(checkpoints == models && now.Count("codedrift_checkpoint_failures_total") == 0,
                 Text("checkpoints: %zu of %zu models, codedrift_checkpoint_failures_total %llu",
                      checkpoints, models, U(now.Count("codedrift_checkpoint_failures_total"))));
  const double period = samples_.back().seconds;
  const uint64_t evaluations = samples_.back().scrape.Evaluations().count;
  const auto parsed = ParseDuration(options_.evaluate_every);
  const double every = parsed.ok() ? std::chrono::duration<double>(parsed.value()).count() : 2.0;
  verdict_.Check(static_cast<double>(evaluations) >= 0.5 * period / every,
                 Text("evaluations ran: %llu in %.0f s (one per %s is %.0f)", U(evaluations),
                      period, options_.evaluate_every.c_str(), period / every));
}

void SoakRun::PrintFigures() {
  // Intervals after the warm-up (all of them when the run is shorter than two warm-ups).
  const double warm_from = samples_.back().seconds < 2 * options_.warmup ? 0 : options_.warmup;
  std::vector<double> mb, records;
  for (size_t i = 1; i < samples_.size(); ++i) {
    if (samples_[i - 1].seconds < warm_from) continue;
    mb.push_back(IntervalMegabytesPerSecond(streams_, samples_[i - 1], samples_[i]));
    records.push_back(IntervalRecordsPerSecond(streams_, samples_[i - 1], samples_[i]));
  }
  const IntervalLatency whole =
      Between(samples_.front().scrape.Evaluations(), samples_.back().scrape.Evaluations());
  size_t models = 0;
  for (const SoakStream& s : streams_) models += s.models.size();
  std::printf("\nfigures (intervals from %.0f s on)\n", warm_from);
  if (!mb.empty()) {
    std::printf(
        "  sustained ingest, all streams: median %.1f MB/s and %.0f records/s per "
        "interval (min %.1f, max %.1f MB/s)\n",
        Median(mb), Median(records), *std::min_element(mb.begin(), mb.end()),
        *std::max_element(mb.begin(), mb.end()));
  }
  std::printf("  evaluation passes over %zu models: %llu, mean %.2f ms, slowest <= %g ms\n", models,
              U(whole.evaluations), whole.mean_seconds * 1e3, whole.max_bound_seconds * 1e3);
  std::ifstream loadavg("/proc/loadavg");
  std::string load;
  std::getline(loadavg, load);
  std::printf("  load average at the end (1, 5, 15 min, ...): %s on %u cores\n", load.c_str(),
              std::thread::hardware_concurrency());
}

}  // namespace codedrift::soak
