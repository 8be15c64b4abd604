// Reads the first document of a YAML text and probes what follows it, without yaml-cpp 0.7's
// LoadAll: on a stray flow token (a lone ',' or ']') its parser yields an empty document
// without consuming the token, so LoadAll loops forever while memory grows (yaml-cpp issue
// #1040, fixed upstream after the 0.7.0 Debian 12 ships). Internal to the library.
#pragma once

#include <optional>
#include <string>

#include <yaml-cpp/yaml.h>

namespace codedrift {

struct YamlDocuments {
  YAML::Node first;  // the first document; Null when the text holds none
  // Where the first node of a later document with content starts (a stray "---" or "..." has
  // none).
  std::optional<YAML::Mark> second_document;
  // Where a token stopped the parser without being consumed: the text is not valid YAML.
  std::optional<YAML::Mark> stray_token;
};

// Throws YAML::Exception on a syntax error, as YAML::Load does. Always returns: every step of
// the probe either consumes text or ends it.
YamlDocuments ReadYamlDocuments(const std::string& text);

}  // namespace codedrift
