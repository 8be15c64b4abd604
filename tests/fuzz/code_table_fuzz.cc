// Fuzz target: the code-table loader (ParseCodeTable).
// Property: any text either fails with "file:line: reason" at a line of the text, or loads into
// a table whose canonical form (FormatCodeTable) loads again into the same canonical form, and
// whose Kraft sum is at most 1 (RFC 1951 §3.2.2's canonical construction needs it). It never
// crashes, hangs or throws.
#include <string>

#include "codedrift/code_table.h"

#include "fuzz_check.h"
#include "fuzz_text.h"

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  using namespace codedrift;
  using namespace codedrift::fuzz;
  const std::string text(reinterpret_cast<const char*>(data), size);
  const std::string file_name = "fuzz.table";
  const Result<CodeTable> table = ParseCodeTable(text, file_name);
  if (!table.ok()) {
    const std::string& message = table.error().message;
    if (!HasPosition(message.substr(0, message.find('\n')), file_name, text, false)) {
      std::fprintf(stderr, "unpositioned error: %s\n", message.c_str());
      FUZZ_CHECK(false);
    }
    return 0;
  }
  FUZZ_CHECK(table.value().KraftSumValue() <= 1.0 + 1e-9);
  const std::string canonical = FormatCodeTable(table.value());
  const Result<CodeTable> again = ParseCodeTable(canonical, file_name);
  if (!again.ok()) {
    std::fprintf(stderr, "canonical form does not load: %s\n%s\n", again.error().message.c_str(),
                 canonical.c_str());
    FUZZ_CHECK(false);
  }
  FUZZ_CHECK(FormatCodeTable(again.value()) == canonical);
  return 0;
}
