#include "yaml_documents.h"

#include <sstream>

#include <yaml-cpp/eventhandler.h>

namespace codedrift {
namespace {

// Notes where the current document starts and where its first node (if any) starts.
class DocumentProbe : public YAML::EventHandler {
 public:
  void OnDocumentStart(const YAML::Mark& mark) override {
    start = mark;
    has_content = false;
  }
  void OnDocumentEnd() override {}
  void OnNull(const YAML::Mark&, YAML::anchor_t) override {}
  void OnAlias(const YAML::Mark& mark, YAML::anchor_t) override { Content(mark); }
  void OnScalar(const YAML::Mark& mark, const std::string&, YAML::anchor_t,
                const std::string&) override {
    Content(mark);
  }
  void OnSequenceStart(const YAML::Mark& mark, const std::string&, YAML::anchor_t,
                       YAML::EmitterStyle::value) override {
    Content(mark);
  }
  void OnSequenceEnd() override {}
  void OnMapStart(const YAML::Mark& mark, const std::string&, YAML::anchor_t,
                  YAML::EmitterStyle::value) override {
    Content(mark);
  }
  void OnMapEnd() override {}

  YAML::Mark start = YAML::Mark::null_mark();
  bool has_content = false;
  YAML::Mark content = YAML::Mark::null_mark();  // where the document's first node starts

 private:
  void Content(const YAML::Mark& mark) {
    if (!has_content) content = mark;
    has_content = true;
  }
};

}  // namespace

YamlDocuments ReadYamlDocuments(const std::string& text) {
  YamlDocuments out;
  out.first = YAML::Load(text);
  std::istringstream stream(text);
  YAML::Parser parser(stream);
  DocumentProbe probe;
  if (!parser.HandleNextDocument(probe)) return out;  // no document at all
  int previous = probe.start.pos;
  while (parser.HandleNextDocument(probe)) {
    if (probe.start.pos == previous) {  // nothing consumed: a stray token
      out.stray_token = probe.start;
      return out;
    }
    if (probe.has_content) {
      out.second_document = probe.content;
      return out;
    }
    previous = probe.start.pos;
  }
  return out;
}

}  // namespace codedrift
