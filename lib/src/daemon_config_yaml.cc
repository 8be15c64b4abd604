// Loading exactly one YAML document with yaml-cpp 0.7 without its LoadAll.
//
// yaml-cpp 0.7's LoadAll never returns on a stray flow token such as a lone ",": the parser
// emits an empty document without consuming the token, so every call yields the same empty
// document again and memory grows until the process dies (yaml-cpp issue #1040; fixed upstream
// by pull request #1319, after the 0.7.0 that Debian 12 ships). Load parses just the first
// document; a probe then walks the document starts itself and stops when one repeats.
#include <sstream>

#include <yaml-cpp/eventhandler.h>

#include "daemon_config_reader.h"
#include "daemon_config_text.h"

namespace codedrift {
namespace {

// Records where documents start and ignores everything else.
class DocumentStarts : public YAML::EventHandler {
 public:
  void OnDocumentStart(const YAML::Mark& mark) override { last_start = mark; }
  void OnDocumentEnd() override {}
  void OnNull(const YAML::Mark&, YAML::anchor_t) override {}
  void OnAlias(const YAML::Mark&, YAML::anchor_t) override {}
  void OnScalar(const YAML::Mark&, const std::string&, YAML::anchor_t,
                const std::string&) override {}
  void OnSequenceStart(const YAML::Mark&, const std::string&, YAML::anchor_t,
                       YAML::EmitterStyle::value) override {}
  void OnSequenceEnd() override {}
  void OnMapStart(const YAML::Mark&, const std::string&, YAML::anchor_t,
                  YAML::EmitterStyle::value) override {}
  void OnMapEnd() override {}

  YAML::Mark last_start = YAML::Mark::null_mark();
};

SourcePosition FromMark(const YAML::Mark& mark) {
  if (mark.line < 0 || mark.column < 0) return {};
  return {mark.line + 1, mark.column + 1};
}

}  // namespace

std::optional<YAML::Node> LoadSingleYamlDocument(std::string_view text,
                                                 ConfigDiagnostics& diagnostics) {
  const std::string owned(text);
  YAML::Node document;
  try {
    document = YAML::Load(owned);
    std::istringstream stream(owned);
    YAML::Parser parser(stream);
    DocumentStarts starts;
    if (!parser.HandleNextDocument(starts)) return document;  // empty text
    const YAML::Mark first = starts.last_start;
    if (!parser.HandleNextDocument(starts)) return document;  // exactly one document
    const YAML::Mark second = starts.last_start;
    // A document that starts where the previous one did consumed nothing: a stray token.
    YAML::Mark stray = second.pos == first.pos ? second : YAML::Mark::null_mark();
    if (stray.pos < 0 && parser.HandleNextDocument(starts) && starts.last_start.pos == second.pos) {
      stray = second;
    }
    if (stray.pos >= 0) {
      const std::string_view token =
          static_cast<size_t>(stray.pos) < text.size() ? text.substr(stray.pos, 1) : "";
      diagnostics.Report(FromMark(stray), "YAML syntax error: unexpected " +
                                              QuoteForMessage(token) + ", expected a value");
    } else {
      diagnostics.Report(FromMark(second),
                         "a second YAML document starts here, expected a single document");
    }
  } catch (const YAML::Exception& error) {
    diagnostics.Report(FromMark(error.mark), "YAML syntax error: " + error.msg);
  } catch (const std::exception& error) {
    diagnostics.Report({}, std::string("cannot parse YAML: ") + error.what());
  }
  return std::nullopt;
}

}  // namespace codedrift
