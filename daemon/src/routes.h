// The daemon's HTTP routes (DESIGN.md section 5): metrics, JSON API, proposals, reload,
// health and the status page.
#pragma once

#include <memory>

#include "http_router.h"

namespace codedrift {

class Daemon;

// Handlers call back into `daemon`, which must outlive the router.
std::shared_ptr<const HttpRouter> BuildRouter(Daemon& daemon);

}  // namespace codedrift
