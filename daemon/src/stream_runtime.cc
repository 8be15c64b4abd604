#include "stream_runtime.h"

namespace codedrift {

bool SameListener(const StreamConfig& a, const StreamConfig& b) {
  return a.name == b.name && a.listen == b.listen && a.framing == b.framing &&
         a.max_record_bytes == b.max_record_bytes && a.overlong == b.overlong &&
         a.max_connections == b.max_connections && a.idle_timeout == b.idle_timeout &&
         a.allow == b.allow && a.receive_buffer_bytes == b.receive_buffer_bytes;
}

}  // namespace codedrift
