// ProposalWriter: writes retrained code tables for the operator into
// state_dir/proposals/<stream>/<model>/, atomically, keeping the newest `keep` per model.
// Thread-safe (one mutex; writes are rare).
#pragma once

#include <mutex>
#include <string>

#include "codedrift/code_table.h"
#include "codedrift/result.h"

namespace codedrift {

struct WrittenProposal {
  std::string path;
  std::string checksum;  // crc32 of the canonical lengths, 8 hex digits
};

class ProposalWriter {
 public:
  explicit ProposalWriter(std::string state_dir, size_t keep = 10)
      : state_dir_(std::move(state_dir)), keep_(keep) {}

  // Adds `created` and `checksum` metadata, writes, prunes older proposals of the model.
  Result<WrittenProposal> Write(const std::string& stream, const std::string& model,
                                CodeTable table);

 private:
  std::mutex mutex_;
  const std::string state_dir_;
  const size_t keep_;
};

// crc32 (zlib) over "symbol length\n" lines of a prefix table in symbol order, escape last.
std::string LengthsChecksum(const CodeTable& table);

}  // namespace codedrift
