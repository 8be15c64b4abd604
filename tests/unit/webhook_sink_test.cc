// WebhookSink against a real webhook receiver on 127.0.0.1 run by the test: the document and
// headers, retries after errors, a receiver that is down, slow or back, the bounded queue,
// and that a pending delivery never holds up the io_context.
#include "webhook_sink.h"

#include <chrono>
#include <future>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include <boost/asio/executor_work_guard.hpp>
#include <boost/asio/io_context.hpp>
#include <boost/asio/post.hpp>
#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include "webhook_receiver.h"

namespace codedrift {
namespace {

namespace asio = boost::asio;
using std::chrono::milliseconds;

using webhook_test::ClosedPort;
using webhook_test::Deadline;
using webhook_test::Receiver;

AlertNotice Notice(uint64_t sequence) {
  AlertNotice notice;
  notice.stream = "uplink";
  notice.model = "bytes";
  notice.from_state = "drifting";
  notice.to_state = "stale";
  notice.reason = "saving 12% over 5% for 10m";
  notice.figures = {{"saving_ratio", 0.12}, {"payback_seconds", 3600}};
  notice.proposal_url = "http://127.0.0.1:7070/api/v1/models/uplink/bytes/proposal";
  notice.proposal_checksum = "0a1b2c3d";
  notice.unix_time = 1700000000.25;
  notice.sequence = sequence;
  return notice;
}

// Owns the io_context the sink runs on and the io threads StartIo() starts.
class WebhookSinkTest : public ::testing::Test {
 protected:
  void TearDown() override {
    sink_.reset();
    EXPECT_TRUE(StopIo()) << "the sink left work on the io_context after Stop";
  }

  static WebhookOptions Options(uint16_t port, uint32_t retries = 3) {
    WebhookOptions options;
    options.target.host = "127.0.0.1";
    options.target.port = port;
    options.target.target = "/hook";
    options.timeout = std::chrono::seconds(5);
    options.retries = retries;
    options.first_backoff = milliseconds(10);
    options.max_backoff = milliseconds(40);
    return options;
  }

  void StartSink(const WebhookOptions& options) {
    sink_ = std::make_unique<WebhookSink>(io_, options);
  }
  // Two io threads by default, as the daemon may run: the sink must keep to its strand.
  void StartIo(int threads = 2) {
    guard_.emplace(io_.get_executor());
    for (int i = 0; i < threads; ++i) {
      ran_.push_back(std::async(std::launch::async, [this] { io_.run(); }));
    }
  }
  // Lets run() return once no work is left; true when it did before the deadline.
  bool StopIo() {
    guard_.reset();
    bool finished = true;
    for (auto& ran : ran_) {
      finished = ran.wait_until(Deadline()) == std::future_status::ready && finished;
    }
    if (!finished) io_.stop();
    for (auto& ran : ran_) ran.wait();
    ran_.clear();
    return finished;
  }

  asio::io_context io_;
  std::optional<asio::executor_work_guard<asio::io_context::executor_type>> guard_;
  std::vector<std::future<void>> ran_;
  std::unique_ptr<WebhookSink> sink_;
};

TEST(WebhookDocumentTest, NamesEveryFieldInLowerSnakeCase) {
  const nlohmann::json expected = nlohmann::json::parse(R"({
      "stream": "uplink", "model": "bytes", "state": "stale", "previous_state": "drifting",
      "reason": "saving 12% over 5% for 10m", "time": 1700000000.25,
      "figures": {"saving_ratio": 0.12, "payback_seconds": 3600},
      "proposal": {"url": "http://127.0.0.1:7070/api/v1/models/uplink/bytes/proposal",
                   "checksum": "0a1b2c3d"}})");
  EXPECT_EQ(WebhookDocument(Notice(7)), expected);
  EXPECT_EQ(WebhookDeliveryKey(Notice(7)), "uplink/bytes/7");
}

TEST(WebhookDocumentTest, NoProposalIsNullAndNoFiguresIsAnEmptyObject) {
  AlertNotice notice = Notice(1);
  notice.from_state = "fit";
  notice.to_state = "drifting";
  notice.figures = nullptr;
  notice.proposal_url.reset();
  const nlohmann::json doc = WebhookDocument(notice);
  EXPECT_TRUE(doc.at("proposal").is_null());
  EXPECT_EQ(doc.at("figures"), nlohmann::json::object());
  EXPECT_EQ(doc.at("state"), "drifting");
  EXPECT_EQ(doc.at("previous_state"), "fit");

  notice.proposal_url = "http://example.invalid/p";
  notice.proposal_checksum.reset();
  EXPECT_EQ(WebhookDocument(notice).at("proposal"),
            nlohmann::json::parse(R"({"url": "http://example.invalid/p", "checksum": null})"));
}

// POST with the JSON body; Host carries the port because it is not http's default 80
// (RFC 9110 §4.2.1 and §7.2, from memory).
TEST_F(WebhookSinkTest, PostsTheDocumentWithItsHeaders) {
  Receiver receiver;
  WebhookOptions options = Options(receiver.port());
  options.target.target = "/hook?site=lab";
  StartSink(options);
  StartIo();
  sink_->Enqueue(Notice(7));
  ASSERT_TRUE(sink_->WaitIdle(Deadline()));

  const auto received = receiver.received();
  ASSERT_EQ(received.size(), 1u);
  EXPECT_EQ(received[0].method, "POST");
  EXPECT_EQ(received[0].target, "/hook?site=lab");
  EXPECT_EQ(received[0].host, "127.0.0.1:" + std::to_string(receiver.port()));
  EXPECT_EQ(received[0].content_type, "application/json");
  EXPECT_EQ(received[0].user_agent, "codedriftd");
  EXPECT_EQ(received[0].delivery, "uplink/bytes/7");
  EXPECT_EQ(nlohmann::json::parse(received[0].body), WebhookDocument(Notice(7)));

  const WebhookCounters counters = sink_->counters();
  EXPECT_EQ(counters.delivered, 1u);
  EXPECT_EQ(counters.failed_attempts, 0u);
  EXPECT_EQ(counters.queued, 0u);
}

TEST_F(WebhookSinkTest, ResolvesAHostName) {
  Receiver receiver;
  WebhookOptions options = Options(receiver.port());
  options.target.host = "localhost";  // /etc/hosts; a ::1 answer is refused, then 127.0.0.1
  StartSink(options);
  StartIo();
  sink_->Enqueue(Notice(1));
  ASSERT_TRUE(sink_->WaitIdle(Deadline()));
  EXPECT_EQ(sink_->counters().delivered, 1u);
  ASSERT_EQ(receiver.received().size(), 1u);
  EXPECT_EQ(receiver.received()[0].host, "localhost:" + std::to_string(receiver.port()));
}

// Only 2xx is success (RFC 9110 §15.3, from memory): two 500s are two failed attempts, the
// third attempt delivers, and the next notice waits its turn behind all of them.
TEST_F(WebhookSinkTest, RetriesAfterServerErrorsAndDeliversOnceInOrder) {
  Receiver receiver;
  receiver.Script({500, 500});
  StartSink(Options(receiver.port(), /*retries=*/5));
  sink_->Enqueue(Notice(1));
  sink_->Enqueue(Notice(2));
  StartIo();
  ASSERT_TRUE(sink_->WaitIdle(Deadline()));

  const WebhookCounters counters = sink_->counters();
  EXPECT_EQ(counters.delivered, 2u);
  EXPECT_EQ(counters.failed_attempts, 2u);
  EXPECT_EQ(counters.dropped_after_retries, 0u);
  EXPECT_EQ(receiver.deliveries(), (std::vector<std::string>{"uplink/bytes/1", "uplink/bytes/1",
                                                             "uplink/bytes/1", "uplink/bytes/2"}));
  const auto received = receiver.received();
  EXPECT_EQ(received[0].body, received[2].body);  // a retry resends the same document
}

TEST_F(WebhookSinkTest, AClientErrorStatusIsAFailedAttempt) {
  Receiver receiver;
  receiver.Script({404});
  StartSink(Options(receiver.port(), /*retries=*/0));
  StartIo();
  sink_->Enqueue(Notice(1));
  ASSERT_TRUE(sink_->WaitIdle(Deadline()));
  const WebhookCounters counters = sink_->counters();
  EXPECT_EQ(counters.delivered, 0u);
  EXPECT_EQ(counters.failed_attempts, 1u);
  EXPECT_EQ(counters.dropped_after_retries, 1u);
}

TEST_F(WebhookSinkTest, DropsAfterRetriesWhileDownThenDeliversTheNextOnceBack) {
  const uint16_t port = ClosedPort();
  StartSink(Options(port, /*retries=*/2));
  StartIo();
  sink_->Enqueue(Notice(1));
  ASSERT_TRUE(sink_->WaitIdle(Deadline()));
  WebhookCounters counters = sink_->counters();
  EXPECT_EQ(counters.failed_attempts, 3u);  // the first attempt and two retries
  EXPECT_EQ(counters.dropped_after_retries, 1u);
  EXPECT_EQ(counters.delivered, 0u);

  Receiver receiver(port);
  sink_->Enqueue(Notice(2));
  ASSERT_TRUE(sink_->WaitIdle(Deadline()));
  counters = sink_->counters();
  EXPECT_EQ(counters.delivered, 1u);
  EXPECT_EQ(counters.failed_attempts, 3u);
  EXPECT_EQ(receiver.deliveries(), std::vector<std::string>{"uplink/bytes/2"});
}

TEST_F(WebhookSinkTest, DeliversANoticeWhoseReceiverComesBackDuringItsRetries) {
  const uint16_t port = ClosedPort();
  StartSink(Options(port, /*retries=*/100000));
  StartIo();
  sink_->Enqueue(Notice(1));
  ASSERT_TRUE(
      sink_->WaitFor([](const WebhookCounters& c) { return c.failed_attempts >= 2; }, Deadline()));

  Receiver receiver(port);
  ASSERT_TRUE(sink_->WaitIdle(Deadline()));
  const WebhookCounters counters = sink_->counters();
  EXPECT_EQ(counters.delivered, 1u);
  EXPECT_EQ(counters.dropped_after_retries, 0u);
  EXPECT_GE(counters.failed_attempts, 2u);
  EXPECT_EQ(receiver.deliveries(), std::vector<std::string>{"uplink/bytes/1"});
}

TEST_F(WebhookSinkTest, CountsATimeoutWhenTheReceiverIsTooSlow) {
  Receiver receiver;
  receiver.Hold();
  WebhookOptions options = Options(receiver.port(), /*retries=*/1);
  options.timeout = milliseconds(300);
  StartSink(options);
  StartIo();
  sink_->Enqueue(Notice(1));
  ASSERT_TRUE(sink_->WaitIdle(Deadline()));
  ASSERT_TRUE(receiver.WaitForRequests(2));  // the sink may hang up before the receiver reads
  const WebhookCounters counters = sink_->counters();
  EXPECT_EQ(counters.failed_attempts, 2u);
  EXPECT_EQ(counters.dropped_after_retries, 1u);
  EXPECT_EQ(counters.delivered, 0u);
  EXPECT_EQ(receiver.deliveries(), (std::vector<std::string>{"uplink/bytes/1", "uplink/bytes/1"}));
  receiver.Release(200);  // too late: the sink has hung up
}

TEST_F(WebhookSinkTest, ServesOtherWorkOnTheIoContextWhileADeliveryIsPending) {
  Receiver receiver;
  receiver.Hold();
  WebhookOptions options = Options(receiver.port());
  options.timeout = std::chrono::seconds(60);  // only Release ends the first delivery
  StartSink(options);
  StartIo(/*threads=*/1);  // one thread: the posted task runs only if the sink yields it
  sink_->Enqueue(Notice(1));
  ASSERT_TRUE(receiver.WaitForRequests(1));
  sink_->Enqueue(Notice(2));  // returns while the receiver sits on the first one

  std::promise<WebhookCounters> seen;
  asio::post(io_, [&] { seen.set_value(sink_->counters()); });
  auto future = seen.get_future();
  ASSERT_EQ(future.wait_until(Deadline()), std::future_status::ready);
  const WebhookCounters during = future.get();
  EXPECT_EQ(during.queued, 2u);
  EXPECT_EQ(during.delivered, 0u);
  EXPECT_EQ(during.failed_attempts, 0u);

  receiver.Release(200);
  ASSERT_TRUE(sink_->WaitIdle(Deadline()));
  EXPECT_EQ(sink_->counters().delivered, 2u);
  EXPECT_EQ(sink_->counters().failed_attempts, 0u);
}

TEST_F(WebhookSinkTest, DropsTheOldestWhenTheQueueIsFull) {
  Receiver receiver;
  WebhookOptions options = Options(receiver.port());
  options.queue_limit = 2;
  StartSink(options);
  // The io_context is not running yet, so all five wait in the queue.
  for (uint64_t sequence = 1; sequence <= 5; ++sequence) sink_->Enqueue(Notice(sequence));
  WebhookCounters counters = sink_->counters();
  EXPECT_EQ(counters.dropped_queue_full, 3u);
  EXPECT_EQ(counters.queued, 2u);

  StartIo();
  ASSERT_TRUE(sink_->WaitIdle(Deadline()));
  counters = sink_->counters();
  EXPECT_EQ(counters.delivered, 2u);
  EXPECT_EQ(counters.dropped_queue_full, 3u);
  EXPECT_EQ(receiver.deliveries(), (std::vector<std::string>{"uplink/bytes/4", "uplink/bytes/5"}));
}

TEST_F(WebhookSinkTest, StopEndsItsWorkAndKeepsTheUndeliveredCounted) {
  StartSink(Options(ClosedPort(), /*retries=*/100000));
  StartIo();
  sink_->Enqueue(Notice(1));
  sink_->Enqueue(Notice(2));
  ASSERT_TRUE(
      sink_->WaitFor([](const WebhookCounters& c) { return c.failed_attempts >= 1; }, Deadline()));
  sink_->Stop();
  EXPECT_TRUE(StopIo());      // the backoff timer and the sockets are gone, run() returns
  sink_->Enqueue(Notice(3));  // ignored after Stop
  const WebhookCounters counters = sink_->counters();
  EXPECT_EQ(counters.queued, 2u);
  EXPECT_EQ(counters.delivered, 0u);
  EXPECT_EQ(counters.dropped_after_retries, 0u);
  EXPECT_FALSE(sink_->WaitIdle(Deadline()));  // stopped with notices left: false at once
}

TEST(WebhookOptionsTest, FromConfigTakesUrlTimeoutAndRetries) {
  WebhookConfig config;
  config.url = "http://127.0.0.1:9000/hook";
  config.target.host = "127.0.0.1";
  config.target.port = 9000;
  config.target.target = "/hook";
  config.timeout = milliseconds(1500);
  config.retries = 7;
  const WebhookOptions options = WebhookOptions::FromConfig(config);
  EXPECT_EQ(options.target.host, "127.0.0.1");
  EXPECT_EQ(options.target.port, 9000);
  EXPECT_EQ(options.target.target, "/hook");
  EXPECT_EQ(options.timeout, milliseconds(1500));
  EXPECT_EQ(options.retries, 7u);
  EXPECT_EQ(options.queue_limit, 256u);
}

}  // namespace
}  // namespace codedrift
