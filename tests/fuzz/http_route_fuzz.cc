// Fuzz target: DecodePath, HttpRouter and the admin-token comparison.
// Property: a path that decodes (kOk) has only segments a file system cannot be walked with
// (non-empty, not "." or "..", no '/', '\\', NUL or other control byte) and re-encoding them
// decodes to the same segments; a rejected path yields no segments; the router answers every
// request with 200, 400, 404 or 405, and a handler only ever sees parameters of
// [a-z0-9_-]{1,64}; TokenMatches(given, expected) holds exactly when both are equal and
// non-empty.
#include <string>
#include <vector>

#include "fuzz_check.h"
#include "http_router.h"

namespace codedrift::fuzz {
namespace {

bool IsName(const std::string& s) {
  if (s.empty() || s.size() > 64) return false;
  for (char c : s) {
    if (!((c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') || c == '_' || c == '-')) return false;
  }
  return true;
}

std::string PercentEncodeAll(const std::vector<std::string>& segments) {
  static constexpr char kHex[] = "0123456789ABCDEF";
  if (segments.empty()) return "/";
  std::string out;
  for (const std::string& segment : segments) {
    out += '/';
    for (char c : segment) {
      const auto byte = static_cast<unsigned char>(c);
      out += '%';
      out += kHex[byte >> 4];
      out += kHex[byte & 15];
    }
  }
  return out;
}

// The daemon's route patterns (routes.cc); each handler echoes the parameters it was given.
const HttpRouter& Router() {
  static const HttpRouter* router = [] {
    auto* r = new HttpRouter;
    auto echo = [](const HttpRequest& request) {
      std::string body;
      for (const auto& [name, value] : request.params) {
        FUZZ_CHECK(IsName(value));
        body += name + "=" + value + ";";
      }
      return HttpResponse::Text(200, body);
    };
    for (const char* pattern :
         {"/metrics", "/healthz", "/", "/api/v1/models", "/api/v1/models/{stream}/{model}",
          "/api/v1/models/{stream}/{model}/proposal"}) {
      r->Add("GET", pattern, echo);
    }
    r->Add("POST", "/api/v1/models/{stream}/{model}/proposal", echo);
    r->Add("POST", "/api/v1/reload", echo);
    return r;
  }();
  return *router;
}

}  // namespace
}  // namespace codedrift::fuzz

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  using namespace codedrift;
  using namespace codedrift::fuzz;
  FuzzReader reader(data, size);
  static const char* const kMethods[] = {"GET", "HEAD", "POST", "PUT", "DELETE", "get"};
  const char* method = kMethods[reader.Byte() % 6];
  const std::string_view rest = reader.Rest();
  const size_t newline = rest.find('\n');
  const std::string path(rest.substr(0, newline));
  const std::string_view after =
      newline == std::string_view::npos ? std::string_view() : rest.substr(newline + 1);

  std::vector<std::string> segments;
  const PathVerdict verdict = DecodePath(path, &segments);
  if (verdict == PathVerdict::kOk) {
    for (const std::string& segment : segments) {
      FUZZ_CHECK(!segment.empty() && segment != "." && segment != "..");
      for (char c : segment) {
        const auto byte = static_cast<unsigned char>(c);
        FUZZ_CHECK(c != '/' && c != '\\' && byte >= 0x20 && byte != 0x7f);
      }
    }
    std::vector<std::string> again;
    FUZZ_CHECK(DecodePath(PercentEncodeAll(segments), &again) == PathVerdict::kOk);
    FUZZ_CHECK(again == segments);
  } else {
    FUZZ_CHECK(segments.empty());
  }

  HttpRequest request;
  request.method = method;
  request.target = path;
  const size_t question = path.find('?');
  request.path = path.substr(0, question);
  const HttpResponse response = Router().Route(request);
  FUZZ_CHECK(response.status == 200 || response.status == 400 || response.status == 404 ||
             response.status == 405);
  if (verdict == PathVerdict::kMalformed && request.path == path) {
    FUZZ_CHECK(response.status == 400);
  }
  if (response.status == 405) FUZZ_CHECK(!response.headers.empty());

  // The token: the line after the path is offered, the remainder expected.
  const size_t split = after.find('\n');
  const std::string_view given = after.substr(0, split);
  const std::string_view expected =
      split == std::string_view::npos ? std::string_view() : after.substr(split + 1);
  FUZZ_CHECK(TokenMatches(given, expected) == (!expected.empty() && given == expected));
  return 0;
}
