// The status page in real headless Chromium. A daemon watches two links whose byte code was
// trained on the first phase of a scenario; one link is then fed a later phase (the code goes
// stale), the other keeps the first phase (it stays fit). The page is loaded through a
// recording proxy, so every figure in the DOM can be compared with the exact JSON document
// the API served to the page; screenshots at laptop and phone widths are kept as artefacts.
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <iostream>
#include <map>
#include <memory>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "child_process.h"
#include "chromium.h"
#include "harness.h"
#include "html_scan.h"
#include "recording_proxy.h"

namespace codedrift::testing {
namespace {

namespace fs = std::filesystem;
using nlohmann::json;

// Simulated seconds per real second: the orchard scenario's 0.5 records/s become ~200/s, so
// every 100 ms evaluation sees new traffic (payback needs a nonzero symbol rate).
constexpr char kSpeed[] = "400";
constexpr int kAttempts = 3;

// The figures each card shows, by their API key.
constexpr const char* kFigureFields[] = {
    "entropy_bits",       "deployed_mean_bits", "retrained_mean_bits", "redundancy_bits",
    "saving_ratio",       "saving_lower_ratio", "payback_seconds",     "unknown_symbols_per_second",
    "records_per_second", "window_symbols"};

std::string Scenario() {
  return std::string(CODEDRIFT_SOURCE_DIR) + "/config/scenarios/orchard-probes.yaml";
}

// ctest runs inside the build tree; screenshots are kept in <build>/artifacts.
std::string ArtifactDir() {
  const fs::path dir = fs::path(CODEDRIFT_BIN_DIR).parent_path() / "artifacts";
  fs::create_directories(dir);
  return dir.string();
}

std::string Config() {
  const std::string model =
      "        symbols: {kind: bytes}\n"
      "        window: {symbols: 65536}\n"
      "        table: spring.table\n"
      "        alert: {saving: 5%, for: 0s, min_symbols: 1000, cooldown: 1h, max_payback: 1d}\n";
  return "http: {listen: 127.0.0.1:0}\n"
         "state_dir: state\n"
         "evaluate_every: 100ms\n"
         "streams:\n"
         "  - name: uplink\n"
         "    listen: tcp://127.0.0.1:0\n"
         "    models:\n"
         "      - name: bytes\n" +
         model +
         "  - name: backhaul\n"
         "    listen: tcp://127.0.0.1:0\n"
         "    models:\n"
         "      - name: bytes\n" +
         model +
         "      - name: tokens\n"
         "        symbols: {kind: tokens}\n"
         "        window: {symbols: 4096}\n";
}

// Plays one phase of the scenario into a stream, paced, until killed.
std::unique_ptr<ChildProcess> Play(const TempDir& dir, const std::string& phase, int seed,
                                   uint16_t port) {
  const std::string name = "synth-" + phase;
  return std::make_unique<ChildProcess>(
      std::vector<std::string>{CliPath(), "synth", Scenario(), "--seed", std::to_string(seed),
                               "--phase", phase, "--speed", kSpeed, "--to",
                               "tcp://127.0.0.1:" + std::to_string(port)},
      dir.File(name + ".out"), dir.File(name + ".log"));
}

std::vector<const HtmlElement*> Select(const std::vector<HtmlElement>& elements,
                                       const std::map<std::string, std::string>& attrs,
                                       const std::string& present = "") {
  std::vector<const HtmlElement*> out;
  for (const HtmlElement& e : elements) {
    bool match = present.empty() || e.Has(present);
    for (const auto& [name, value] : attrs) match = match && e.Has(name) && e.Attr(name) == value;
    if (match) out.push_back(&e);
  }
  return out;
}

// The page writes the API's number as JavaScript prints it and an empty string for null.
// JavaScript prints the shortest digits that read back as the same double (ECMA-262,
// Number::toString, from memory), so the value read back must equal the API's exactly.
void ExpectSameNumber(const std::string& shown, const json& api, const std::string& what) {
  if (api.is_null()) {
    EXPECT_EQ(shown, "") << what << " is null in the API";
    return;
  }
  ASSERT_TRUE(api.is_number()) << what << ": " << api.dump();
  ASSERT_FALSE(shown.empty()) << what << ": the page shows nothing, the API says " << api.dump();
  EXPECT_EQ(std::strtod(shown.c_str(), nullptr), api.get<double>()) << what;
}

// The documents the page rendered: the n-th answer to each API path belongs to the page's
// n-th refresh.
struct Rendered {
  json list;
  std::map<std::string, json> models;  // "stream/model" -> document
};

Rendered RenderedDocuments(const std::vector<HttpExchange>& exchanges, int generation) {
  Rendered out;
  std::map<std::string, int> seen;
  for (const HttpExchange& x : exchanges) {
    if (x.target.rfind("/api/v1/models", 0) != 0) continue;
    if (++seen[x.target] != generation) continue;
    const json doc = json::parse(x.body, nullptr, false);
    if (x.target == "/api/v1/models") {
      out.list = doc;
    } else if (doc.is_object()) {
      out.models[doc.value("stream", "") + "/" + doc.value("model", "")] = doc;
    }
  }
  return out;
}

void CheckCard(const std::vector<HtmlElement>& dom, const std::string& key, const json& doc) {
  SCOPED_TRACE(key);
  ASSERT_EQ(Select(dom, {{"data-card", key}}).size(), 1u);
  const HtmlElement& card = *Select(dom, {{"data-card", key}})[0];
  EXPECT_EQ(card.Attr("data-state"), doc["state"].get<std::string>());

  const auto badge = Select(dom, {{"data-model", key}, {"data-field", "state"}});
  ASSERT_EQ(badge.size(), 1u);
  EXPECT_EQ(badge[0]->Attr("data-value"), doc["state"].get<std::string>());
  EXPECT_EQ(badge[0]->text, doc["state"].get<std::string>());

  const auto reason = Select(dom, {{"data-model", key}, {"data-field", "reason"}});
  ASSERT_EQ(reason.size(), 1u);
  EXPECT_EQ(reason[0]->text, doc["reason"].get<std::string>());

  for (const std::string field : kFigureFields) {
    const auto shown = Select(dom, {{"data-model", key}, {"data-field", field}});
    ASSERT_EQ(shown.size(), 1u) << field;
    ExpectSameNumber(shown[0]->Attr("data-value"), doc.value(field, json(nullptr)), field);
    EXPECT_FALSE(shown[0]->text.empty()) << field;
  }

  // The time chart: one element per history entry, in order, and a mark per state change.
  const json& history = doc["history"];
  const auto chart = Select(dom, {{"data-chart", "history"}, {"data-model", key}});
  ASSERT_EQ(chart.size(), 1u);
  EXPECT_EQ(chart[0]->Attr("data-points"), std::to_string(history.size()));
  const auto points = Select(dom, {{"data-model", key}}, "data-point");
  ASSERT_EQ(points.size(), history.size());
  size_t changes = 0;
  for (size_t i = 0; i < history.size(); ++i) {
    EXPECT_EQ(points[i]->Attr("data-point"), std::to_string(i));
    ExpectSameNumber(points[i]->Attr("data-time"), history[i]["time"], "history time");
    ExpectSameNumber(points[i]->Attr("data-entropy-bits"), history[i]["entropy_bits"],
                     "history entropy");
    ExpectSameNumber(points[i]->Attr("data-deployed-mean-bits"), history[i]["deployed_mean_bits"],
                     "history deployed mean");
    ExpectSameNumber(points[i]->Attr("data-retrained-mean-bits"), history[i]["retrained_mean_bits"],
                     "history retrained mean");
    EXPECT_EQ(points[i]->Attr("data-state"), history[i]["state"].get<std::string>());
    if (i > 0 && history[i]["state"] != history[i - 1]["state"]) ++changes;
  }
  EXPECT_EQ(Select(dom, {{"data-model", key}}, "data-state-change").size(), changes);

  // The drift bars: probability now against 2^-length, the distribution a code with those
  // lengths is optimal for (Cover & Thomas, Elements of Information Theory, 2nd ed., section
  // 5.4: L - H = D(p || 2^-l) for a complete code; from memory).
  const json& drift = doc.value("top_drift", json::array());
  const auto bars = Select(dom, {{"data-model", key}}, "data-drift-symbol");
  ASSERT_EQ(bars.size(), drift.size());
  for (size_t i = 0; i < drift.size(); ++i) {
    EXPECT_EQ(bars[i]->Attr("data-drift-symbol"), drift[i]["symbol"].get<std::string>());
    ExpectSameNumber(bars[i]->Attr("data-probability"), drift[i]["probability"], "probability");
    ExpectSameNumber(bars[i]->Attr("data-share-bits"), drift[i]["share_bits"], "share");
    ExpectSameNumber(bars[i]->Attr("data-length"), drift[i]["length"], "length");
    const double assumed = std::exp2(-drift[i]["length"].get<double>());
    EXPECT_NEAR(std::strtod(bars[i]->Attr("data-assumed").c_str(), nullptr), assumed,
                assumed * 1e-12);
  }

  const auto proposal = Select(dom, {{"data-model", key}, {"data-field", "proposal"}});
  ASSERT_EQ(proposal.size(), 1u);
  if (doc["proposal"].is_null()) {
    EXPECT_EQ(proposal[0]->Attr("data-value"), "");
    EXPECT_FALSE(proposal[0]->Has("href"));
  } else {
    EXPECT_EQ(proposal[0]->tag, "a");
    EXPECT_EQ(proposal[0]->Attr("href"), doc["proposal"].get<std::string>());
  }
}

TEST(StatusPage, ShowsEveryModelAsTheApiServesItInHeadlessChromium) {
  ASSERT_TRUE(ChromiumInstalled()) << "chromium is not installed: run .ci/deps.sh";
  TempDir dir;
  // A byte code trained on the scenario's first phase (seed 1); the links get other seeds.
  ASSERT_EQ(
      RunCommand(CliPath() + " synth " + Scenario() +
                 " --seed 1 --phase spring-baseline --records 10000 --to " + dir.File("spring.log"))
          .exit_code,
      0);
  const CommandResult trained = RunCommand(CliPath() + " train --symbols bytes -o " +
                                           dir.File("spring.table") + " " + dir.File("spring.log"));
  ASSERT_EQ(trained.exit_code, 0) << trained.out;
  const CommandResult warmup = RunCommand(CliPath() + " synth " + Scenario() +
                                          " --seed 2 --phase spring-baseline --records 1000");
  ASSERT_EQ(warmup.exit_code, 0);

  DaemonProcess daemon(dir, Config());
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();

  // First the traffic the code was trained on, so the history starts fit.
  SendTcp(daemon.stream_port("uplink"), warmup.out);
  ASSERT_TRUE(WaitFor([&] {
    const json doc = daemon.ModelJson("uplink", "bytes");
    return doc.is_object() && doc.value("window_symbols", 0u) == 65536u &&
           doc["history"].size() >= 5 && doc["state"] == "fit";
  })) << daemon.Log();

  // Then the firmware rollout on the uplink; the backhaul keeps the trained-on traffic.
  auto drift = Play(dir, "probe-firmware-3", 3, daemon.stream_port("uplink"));
  auto steady = Play(dir, "spring-baseline", 4, daemon.stream_port("backhaul"));
  const auto stale_with_proposal = [&] {
    const json doc = daemon.ModelJson("uplink", "bytes");
    return doc.is_object() && doc["state"] == "stale" && doc["proposal"].is_string();
  };
  ASSERT_TRUE(WaitFor(stale_with_proposal)) << daemon.ModelJson("uplink", "bytes").dump(1);
  ASSERT_TRUE(WaitFor([&] {
    const json doc = daemon.ModelJson("backhaul", "bytes");
    return doc.is_object() && doc.value("window_symbols", 0u) == 65536u &&
           doc["saving_ratio"].is_number();
  })) << daemon.ModelJson("backhaul", "bytes").dump(1);

  // The page as the browser saw it. The stale state needs traffic at every evaluation; a
  // scheduling stall on a busy machine can drop it to fit for one evaluation, so the load is
  // repeated (a few times at most) until the page rendered the stale state.
  std::vector<HtmlElement> dom;
  Rendered rendered;
  std::vector<HttpExchange> exchanges;
  int generation = 0;
  for (int attempt = 0; attempt < kAttempts; ++attempt) {
    ASSERT_TRUE(WaitFor(stale_with_proposal));
    RecordingProxy proxy(daemon.http_port());
    ASSERT_NE(proxy.port(), 0);
    const BrowserRun run =
        DumpDom(dir, "http://127.0.0.1:" + std::to_string(proxy.port()) + "/?refresh=2");
    ASSERT_EQ(run.exit_code, 0) << run.log;
    dom = ScanElements(run.out);
    const auto main = Select(dom, {{"id", "cards"}});
    ASSERT_EQ(main.size(), 1u) << run.out;
    generation = std::atoi(main[0]->Attr("data-generation").c_str());
    exchanges = proxy.Exchanges();
    rendered = RenderedDocuments(exchanges, generation);
    if (rendered.models.count("uplink/bytes") &&
        rendered.models["uplink/bytes"]["state"] == "stale") {
      break;
    }
  }
  // Refreshed itself from the API within the 5 s of virtual time (every 2 s asked).
  EXPECT_GE(generation, 2);
  const auto status = Select(dom, {{"id", "status-line"}});
  ASSERT_EQ(status.size(), 1u);
  EXPECT_NE(status[0]->Attr("class"), "error") << status[0]->text;
  for (const HttpExchange& x : exchanges) EXPECT_EQ(x.status, 200) << x.target;

  // Every model in the list has exactly one card, and its figures are the API's.
  ASSERT_TRUE(rendered.list.is_object());
  const json& models = rendered.list["models"];
  ASSERT_EQ(models.size(), 3u);
  EXPECT_EQ(Select(dom, {}, "data-card").size(), models.size());
  for (const json& m : models) {
    const std::string key = m["stream"].get<std::string>() + "/" + m["model"].get<std::string>();
    ASSERT_TRUE(rendered.models.count(key)) << key;
    CheckCard(dom, key, rendered.models[key]);
  }

  // The stale card shows why, with the saving behind it, and offers the proposal.
  const json& stale = rendered.models["uplink/bytes"];
  ASSERT_EQ(stale["state"], "stale") << "no load of " << kAttempts << " saw the stale state";
  const auto stale_reason = Select(dom, {{"data-model", "uplink/bytes"}, {"data-field", "reason"}});
  ASSERT_EQ(stale_reason.size(), 1u);
  EXPECT_NE(stale_reason[0]->text.find("retrained code would save"), std::string::npos)
      << stale_reason[0]->text;
  EXPECT_GE(Select(dom, {{"data-model", "uplink/bytes"}, {"data-state-change", "stale"}}).size(),
            1u);
  const HttpReply table = HttpCall(daemon.http_port(), "GET", stale["proposal"]);
  EXPECT_EQ(table.status, 200);
  EXPECT_NE(table.body.find("\ntable: 1\n"), std::string::npos) << table.body.substr(0, 200);
  EXPECT_EQ(rendered.models["backhaul/bytes"]["state"], "fit");

  // The documents the page got are the daemon's own: its history is a prefix of today's.
  const json now = daemon.ModelJson("uplink", "bytes");
  ASSERT_GE(now["history"].size(), stale["history"].size());
  for (size_t i = 0; i < stale["history"].size(); ++i) {
    EXPECT_EQ(now["history"][i]["time"], stale["history"][i]["time"]);
  }

  // Self-contained: nothing loads from anywhere but the daemon (the one URL in the page is
  // the SVG namespace name, which is never fetched).
  const std::string page = HttpCall(daemon.http_port(), "GET", "/").body;
  size_t urls = 0;
  for (size_t at = page.find("://"); at != std::string::npos; at = page.find("://", at + 3)) {
    ++urls;
  }
  size_t namespaces = 0;
  const std::string svg_ns = "http://www.w3.org/2000/svg";
  for (size_t at = page.find(svg_ns); at != std::string::npos; at = page.find(svg_ns, at + 1)) {
    ++namespaces;
  }
  EXPECT_EQ(urls, namespaces);
  EXPECT_EQ(page.find(" src="), std::string::npos);
  EXPECT_EQ(page.find("@import"), std::string::npos);

  // Screenshots straight from the daemon, kept for people to look at.
  const std::string base = "http://127.0.0.1:" + std::to_string(daemon.http_port()) + "/";
  const struct {
    const char* name;
    int width;
    int height;
  } kShots[] = {{"status-page-laptop.png", 1280, 900},
                {"status-page-phone.png", 390, 844},
                {"status-page-phone-long.png", 390, 3600}};
  for (const auto& shot : kShots) {
    const std::string png = ArtifactDir() + "/" + shot.name;
    fs::remove(png);
    const BrowserRun run = Screenshot(dir, base, png, shot.width, shot.height);
    EXPECT_EQ(run.exit_code, 0) << run.log;
    const auto size = ReadPngSize(png);
    ASSERT_TRUE(size.has_value()) << png << "\n" << run.log;
    EXPECT_EQ(size->width, static_cast<uint32_t>(shot.width));
    EXPECT_EQ(size->height, static_cast<uint32_t>(shot.height));
    std::cout << "screenshot: " << png << "\n";
  }
  drift->Kill();
  steady->Kill();
  EXPECT_EQ(daemon.Stop(), 0) << daemon.Log();
}

}  // namespace
}  // namespace codedrift::testing
