// Tokens on two threads: the capture is cut at a line boundary near its middle, each half goes
// through its own token symbolizer, and the second half's ids are renumbered into the first's
// afterwards, so every count equals that of one sequential pass (max_distinct overflow and
// block boundaries included). When the second half's own symbolizer overflows, renumbering
// cannot be exact (its overflow may hide tokens the first half knows), so the first half's
// symbolizer carries on through the second half instead: correct, but no faster than one
// thread. Captures with unbounded token sets want --mask-digits anyway.
#pragma once

#include <set>

#include "codedrift/result.h"
#include "codedrift/symbolizer.h"

#include "capture_reader.h"
#include "progress.h"
#include "stream_counts.h"

namespace codedrift::cli {

// The halves are split where CountStream splits them for tokens, so `older` is the first
// thread's half. `progress` may be null.
Result<StreamCounts> CountTokensInHalves(const CaptureStream& stream, const TokenOptions& options,
                                         const std::set<int>& orders, bool parallel,
                                         Progress* progress);

}  // namespace codedrift::cli
