#include "webhook_sink.h"

#include <algorithm>
#include <condition_variable>
#include <deque>
#include <mutex>
#include <random>
#include <utility>
#include <vector>

#include <boost/asio/connect.hpp>
#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/post.hpp>
#include <boost/asio/steady_timer.hpp>
#include <boost/asio/strand.hpp>
#include <boost/beast/core/flat_buffer.hpp>
#include <boost/beast/http.hpp>

#include <spdlog/spdlog.h>

namespace codedrift {
namespace {

namespace asio = boost::asio;
namespace beast = boost::beast;
namespace http = beast::http;
using tcp = asio::ip::tcp;

// Only the status line matters; a receiver's headers beyond this are a failed attempt.
constexpr uint32_t kMaxResponseHeaderBytes = 16384;

std::string HostHeader(const HttpUrl& url) {
  std::string host = url.host.find(':') != std::string::npos ? "[" + url.host + "]" : url.host;
  if (url.port != 80) host += ":" + std::to_string(url.port);
  return host;
}

std::string UrlText(const HttpUrl& url) { return "http://" + HostHeader(url) + url.target; }

// The pause after the `failures`-th failed attempt of a notice: first * 2^(failures - 1),
// capped, then half of it fixed and half uniformly random, so daemons that lost the same
// receiver together do not all come back in the same instant.
std::chrono::microseconds Backoff(const WebhookOptions& options, uint32_t failures,
                                  std::minstd_rand& rng) {
  const std::chrono::microseconds cap = std::max(options.max_backoff, options.first_backoff);
  std::chrono::microseconds delay = options.first_backoff;
  for (uint32_t i = 1; i < failures && delay < cap; ++i) delay *= 2;
  delay = std::min(delay, cap);
  const int64_t half = delay.count() / 2;
  std::uniform_int_distribution<int64_t> jitter(0, delay.count() - half);
  return std::chrono::microseconds(half + jitter(rng));
}

}  // namespace

nlohmann::json WebhookDocument(const AlertNotice& notice) {
  nlohmann::json doc = nlohmann::json::object();
  doc["stream"] = notice.stream;
  doc["model"] = notice.model;
  doc["state"] = notice.to_state;
  doc["previous_state"] = notice.from_state;
  doc["reason"] = notice.reason;
  doc["time"] = notice.unix_time;
  doc["figures"] = notice.figures.is_null() ? nlohmann::json::object() : notice.figures;
  if (notice.proposal_url) {
    doc["proposal"] = {{"url", *notice.proposal_url}, {"checksum", nullptr}};
    if (notice.proposal_checksum) doc["proposal"]["checksum"] = *notice.proposal_checksum;
  } else {
    doc["proposal"] = nullptr;
  }
  return doc;
}

std::string WebhookDeliveryKey(const AlertNotice& notice) {
  return notice.stream + "/" + notice.model + "/" + std::to_string(notice.sequence);
}

WebhookOptions WebhookOptions::FromConfig(const WebhookConfig& config) {
  WebhookOptions options;
  options.target = config.target;
  options.timeout = config.timeout;
  options.retries = config.retries;
  return options;
}

// The members under "strand only" are touched by handlers on `strand` alone; the queue, the
// counters and the flags under `mu` are shared with the callers' threads.
struct WebhookSink::Impl : std::enable_shared_from_this<WebhookSink::Impl> {
  Impl(asio::io_context& io, WebhookOptions sink_options)
      : options(std::move(sink_options)),
        host_header(HostHeader(options.target)),
        url_text(UrlText(options.target)),
        strand(asio::make_strand(io)),
        resolver(strand),
        socket(strand),
        deadline(strand),
        pause(strand),
        rng(std::random_device{}()) {}

  // Any thread.
  void Enqueue(AlertNotice notice);
  void Stop();
  WebhookCounters Snapshot() const;  // with `mu` held

  // Strand only.
  void StartNext();
  void Attempt();
  void Connect(std::vector<tcp::endpoint> endpoints);
  void Send();
  void ReadStatus();
  void OnDeadline(uint64_t attempt);
  void Finish(std::string failure);  // empty: delivered
  void Abandon();                    // stopped: the notice goes back to the queue's front
  void CloseSocket();

  const WebhookOptions options;
  const std::string host_header;
  const std::string url_text;
  asio::strand<asio::io_context::executor_type> strand;

  // Strand only.
  tcp::resolver resolver;
  tcp::socket socket;
  asio::steady_timer deadline;  // of the attempt in flight
  asio::steady_timer pause;     // backoff between attempts
  std::minstd_rand rng;
  AlertNotice current;
  http::request<http::string_body> request;  // of `current`, the same for every attempt
  beast::flat_buffer buffer;
  std::optional<http::response_parser<http::empty_body>> parser;
  uint32_t failures = 0;        // failed attempts of `current`
  uint64_t attempt_serial = 0;  // so a deadline firing late never touches a later attempt
  bool attempt_open = false;
  bool timed_out = false;

  mutable std::mutex mu;  // guards the members below
  mutable std::condition_variable changed;
  std::deque<AlertNotice> waiting;
  bool running = false;    // StartNext is posted or a notice is being worked on
  bool in_flight = false;  // `current` holds a notice taken from `waiting`
  bool stopped = false;
  WebhookCounters counts;  // `queued` is computed in Snapshot
};

void WebhookSink::Impl::Enqueue(AlertNotice notice) {
  bool start = false;
  {
    std::lock_guard lock(mu);
    if (stopped) return;
    if (waiting.size() >= std::max<size_t>(options.queue_limit, 1)) {
      waiting.pop_front();
      ++counts.dropped_queue_full;
    }
    waiting.push_back(std::move(notice));
    start = !running;
    running = true;
  }
  changed.notify_all();
  if (start) asio::post(strand, [self = shared_from_this()] { self->StartNext(); });
}

void WebhookSink::Impl::Stop() {
  {
    std::lock_guard lock(mu);
    if (stopped) return;
    stopped = true;
  }
  changed.notify_all();
  // Each cancelled operation's handler sees `stopped` and ends the chain.
  asio::post(strand, [self = shared_from_this()] {
    self->pause.cancel();
    self->deadline.cancel();
    self->resolver.cancel();
    self->CloseSocket();
  });
}

WebhookCounters WebhookSink::Impl::Snapshot() const {
  WebhookCounters out = counts;
  out.queued = waiting.size() + (in_flight ? 1 : 0);
  return out;
}

void WebhookSink::Impl::StartNext() {
  {
    std::lock_guard lock(mu);
    if (stopped || waiting.empty()) {
      running = false;
      return;
    }
    current = std::move(waiting.front());
    waiting.pop_front();
    in_flight = true;
  }
  failures = 0;
  request = http::request<http::string_body>(http::verb::post, options.target.target, 11);
  request.set(http::field::host, host_header);
  request.set(http::field::user_agent, "codedriftd");
  request.set(http::field::content_type, "application/json");
  request.set(kWebhookDeliveryHeader, WebhookDeliveryKey(current));
  request.keep_alive(false);  // alerts are rare: a connection per delivery
  // Replacing invalid UTF-8 keeps dump() from throwing on odd bytes in a reason or figure.
  request.body() =
      WebhookDocument(current).dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
  request.prepare_payload();
  Attempt();
}

void WebhookSink::Impl::Attempt() {
  {
    std::lock_guard lock(mu);
    if (stopped) return Abandon();
  }
  const uint64_t attempt = ++attempt_serial;
  attempt_open = true;
  timed_out = false;
  deadline.expires_after(options.timeout);
  deadline.async_wait([self = shared_from_this(), attempt](beast::error_code ec) {
    if (!ec) self->OnDeadline(attempt);
  });
  beast::error_code literal_error;
  const auto address = asio::ip::make_address(options.target.host, literal_error);
  if (!literal_error) return Connect({tcp::endpoint(address, options.target.port)});
  resolver.async_resolve(
      options.target.host, std::to_string(options.target.port),
      [self = shared_from_this()](beast::error_code ec, tcp::resolver::results_type results) {
        if (ec)
          return self->Finish("cannot resolve " + self->options.target.host + ": " + ec.message());
        std::vector<tcp::endpoint> endpoints;
        for (const auto& entry : results) endpoints.push_back(entry.endpoint());
        self->Connect(std::move(endpoints));
      });
}

void WebhookSink::Impl::Connect(std::vector<tcp::endpoint> endpoints) {
  asio::async_connect(socket, std::move(endpoints),
                      [self = shared_from_this()](beast::error_code ec, const tcp::endpoint&) {
                        if (ec) return self->Finish("cannot connect: " + ec.message());
                        self->Send();
                      });
}

void WebhookSink::Impl::Send() {
  http::async_write(socket, request, [self = shared_from_this()](beast::error_code ec, size_t) {
    if (ec) return self->Finish("cannot send: " + ec.message());
    self->ReadStatus();
  });
}

void WebhookSink::Impl::ReadStatus() {
  buffer.clear();
  parser.emplace();
  parser->header_limit(kMaxResponseHeaderBytes);
  http::async_read_header(socket, buffer, *parser,
                          [self = shared_from_this()](beast::error_code ec, size_t) {
                            if (ec) return self->Finish("no response: " + ec.message());
                            const unsigned status = self->parser->get().result_int();
                            if (status >= 200 && status < 300) return self->Finish({});
                            self->Finish("answered " + std::to_string(status));
                          });
}

void WebhookSink::Impl::OnDeadline(uint64_t attempt) {
  if (attempt != attempt_serial || !attempt_open) return;
  // The pending operation completes with an error and its handler calls Finish.
  timed_out = true;
  resolver.cancel();
  CloseSocket();
}

void WebhookSink::Impl::Finish(std::string failure) {
  attempt_open = false;
  deadline.cancel();
  CloseSocket();
  if (!failure.empty() && timed_out) {
    failure = "no answer within " + FormatDuration(options.timeout);
  }
  const bool delivered = failure.empty();
  bool retry = false;
  {
    std::lock_guard lock(mu);
    if (stopped) return Abandon();
    if (delivered) {
      ++counts.delivered;
    } else {
      ++counts.failed_attempts;
      ++failures;
      retry = failures <= options.retries;
      if (!retry) ++counts.dropped_after_retries;
    }
    if (!retry) in_flight = false;
  }
  changed.notify_all();
  if (delivered) return StartNext();
  const std::string key = WebhookDeliveryKey(current);
  if (!retry) {
    spdlog::warn("webhook {}: alert {} dropped after {} failed attempts; last: {}", url_text, key,
                 failures, failure);
    return StartNext();
  }
  spdlog::debug("webhook {}: alert {} attempt {} failed: {}", url_text, key, failures, failure);
  pause.expires_after(Backoff(options, failures, rng));
  // A cancelled pause (Stop) still goes through Attempt, which sees `stopped`.
  pause.async_wait([self = shared_from_this()](beast::error_code) { self->Attempt(); });
}

// Called with `mu` held.
void WebhookSink::Impl::Abandon() {
  if (in_flight) waiting.push_front(std::move(current));
  in_flight = false;
  running = false;
  changed.notify_all();
}

void WebhookSink::Impl::CloseSocket() {
  beast::error_code ignored;
  socket.shutdown(tcp::socket::shutdown_both, ignored);
  socket.close(ignored);
}

WebhookSink::WebhookSink(asio::io_context& io, WebhookOptions options)
    : impl_(std::make_shared<Impl>(io, std::move(options))) {}

WebhookSink::~WebhookSink() { impl_->Stop(); }

void WebhookSink::Enqueue(AlertNotice notice) { impl_->Enqueue(std::move(notice)); }

WebhookCounters WebhookSink::counters() const {
  std::lock_guard lock(impl_->mu);
  return impl_->Snapshot();
}

void WebhookSink::Stop() { impl_->Stop(); }

bool WebhookSink::WaitFor(const std::function<bool(const WebhookCounters&)>& done,
                          std::chrono::steady_clock::time_point deadline) const {
  std::unique_lock lock(impl_->mu);
  impl_->changed.wait_until(lock, deadline,
                            [&] { return impl_->stopped || done(impl_->Snapshot()); });
  return done(impl_->Snapshot());
}

bool WebhookSink::WaitIdle(std::chrono::steady_clock::time_point deadline) const {
  return WaitFor([](const WebhookCounters& counters) { return counters.queued == 0; }, deadline);
}

}  // namespace codedrift
