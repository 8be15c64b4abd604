#include "stream_listener.h"

#include <iostream>
#include <utility>

#include "io_pool.h"
#include "listener_core.h"

namespace codedrift {

StreamListener::StreamListener(IoPool& pool, const StreamConfig& config,
                               std::shared_ptr<StreamCounters> counters, RecordHandler handler,
                               ListenerLog log, RunHandler run_handler) {
  auto context = std::make_shared<ListenerContext>();
  context->config = config;
  context->handler = std::move(handler);
  context->run_handler = std::move(run_handler);
  context->counters = std::move(counters);
  context->log = log ? std::move(log) : [](std::string_view line) { std::clog << line << '\n'; };
  if (config.listen.scheme == ListenScheme::kUdp) {
    core_ = MakeDatagramListener(pool.Next(), std::move(context));
  } else {
    core_ = MakeStreamSocketListener(pool, std::move(context));
  }
}

StreamListener::~StreamListener() { core_->Stop(std::chrono::milliseconds(0)); }

Status StreamListener::Start() { return core_->Start(); }

uint16_t StreamListener::bound_port() const { return core_->bound_port(); }

void StreamListener::Stop(std::chrono::milliseconds drain_limit) { core_->Stop(drain_limit); }

bool StreamListener::WaitStopped(std::chrono::steady_clock::time_point deadline) {
  return core_->WaitStopped(deadline);
}

}  // namespace codedrift
