#include "http_router.h"

#include <exception>

namespace codedrift {
namespace {

constexpr size_t kMaxParamLength = 64;

int HexValue(char c) {
  if (c >= '0' && c <= '9') return c - '0';
  if (c >= 'a' && c <= 'f') return c - 'a' + 10;
  if (c >= 'A' && c <= 'F') return c - 'A' + 10;
  return -1;
}

// Stream and model names: [a-z0-9_-]{1,64} (DESIGN.md §5 config).
bool IsName(std::string_view s) {
  if (s.empty() || s.size() > kMaxParamLength) return false;
  for (char c : s) {
    const bool ok = (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') || c == '_' || c == '-';
    if (!ok) return false;
  }
  return true;
}

bool IsParam(std::string_view pattern_segment) {
  return pattern_segment.size() > 2 && pattern_segment.front() == '{' &&
         pattern_segment.back() == '}';
}

std::vector<std::string> SplitPattern(std::string_view pattern) {
  std::vector<std::string> out;
  size_t pos = 1;  // patterns start with '/'
  while (pos < pattern.size()) {
    const size_t slash = pattern.find('/', pos);
    const size_t end = slash == std::string_view::npos ? pattern.size() : slash;
    out.emplace_back(pattern.substr(pos, end - pos));
    pos = end + 1;
  }
  return out;
}

}  // namespace

std::string_view HttpRequest::Header(std::string_view name) const {
  const auto it = headers.find(std::string(name));
  return it == headers.end() ? std::string_view() : std::string_view(it->second);
}

HttpResponse HttpResponse::Text(int status, std::string body) {
  HttpResponse response;
  response.status = status;
  response.body = std::move(body);
  return response;
}

HttpResponse HttpResponse::Json(int status, std::string body) {
  HttpResponse response;
  response.status = status;
  response.content_type = "application/json";
  response.body = std::move(body);
  return response;
}

PathVerdict DecodePath(std::string_view path, std::vector<std::string>* segments) {
  segments->clear();
  if (path.empty() || path.front() != '/') return PathVerdict::kMalformed;
  if (path == "/") return PathVerdict::kOk;
  bool rejected = false;  // keep scanning: a bad escape anywhere makes the request malformed
  size_t pos = 1;
  while (true) {
    const size_t slash = path.find('/', pos);
    const size_t end = slash == std::string_view::npos ? path.size() : slash;
    std::string segment;
    for (size_t i = pos; i < end; ++i) {
      char c = path[i];
      if (c == '%') {
        const int high = i + 2 < end ? HexValue(path[i + 1]) : -1;  // needs two hex digits
        const int low = i + 2 < end ? HexValue(path[i + 2]) : -1;
        if (high < 0 || low < 0) {
          segments->clear();  // only a path that decodes hands out segments
          return PathVerdict::kMalformed;
        }
        c = static_cast<char>(high * 16 + low);
        i += 2;
      }
      const auto byte = static_cast<unsigned char>(c);
      if (c == '/' || c == '\\' || byte < 0x20 || byte == 0x7f) rejected = true;
      segment.push_back(c);
    }
    if (segment.empty() || segment == "." || segment == "..") rejected = true;
    segments->push_back(std::move(segment));
    if (slash == std::string_view::npos) break;
    pos = slash + 1;
  }
  if (rejected) {
    segments->clear();
    return PathVerdict::kRejected;
  }
  return PathVerdict::kOk;
}

void HttpRouter::Add(std::string_view method, std::string_view pattern, HttpHandler handler) {
  std::vector<std::string> segments = SplitPattern(pattern);
  for (RouteEntry& route : routes_) {
    if (route.segments == segments) {
      route.handlers[std::string(method)] = std::move(handler);
      return;
    }
  }
  RouteEntry route;
  route.segments = std::move(segments);
  route.handlers[std::string(method)] = std::move(handler);
  routes_.push_back(std::move(route));
}

bool HttpRouter::Matches(const RouteEntry& route, const std::vector<std::string>& segments,
                         std::map<std::string, std::string>* params) {
  if (route.segments.size() != segments.size()) return false;
  std::map<std::string, std::string> found;
  for (size_t i = 0; i < segments.size(); ++i) {
    const std::string& want = route.segments[i];
    if (IsParam(want)) {
      if (!IsName(segments[i])) return false;
      found[want.substr(1, want.size() - 2)] = segments[i];
    } else if (want != segments[i]) {
      return false;
    }
  }
  *params = std::move(found);
  return true;
}

HttpResponse HttpRouter::Route(HttpRequest request) const {
  switch (DecodePath(request.path, &request.segments)) {
    case PathVerdict::kOk:
      break;
    case PathVerdict::kMalformed:
      return HttpResponse::Text(400, "bad request: malformed path\n");
    case PathVerdict::kRejected:
      return HttpResponse::Text(404, "not found\n");
  }
  for (const RouteEntry& route : routes_) {
    if (!Matches(route, request.segments, &request.params)) continue;
    auto it = route.handlers.find(request.method);
    if (it == route.handlers.end() && request.method == "HEAD") it = route.handlers.find("GET");
    if (it == route.handlers.end()) {
      std::string allow;
      for (const auto& [method, handler] : route.handlers) {
        if (!allow.empty()) allow += ", ";
        allow += method;
        if (method == "GET" && !route.handlers.contains("HEAD")) allow += ", HEAD";
      }
      HttpResponse response = HttpResponse::Text(405, "method not allowed\n");
      response.headers.emplace_back("Allow", allow);
      return response;
    }
    try {
      return it->second(request);
    } catch (const std::exception& e) {
      return HttpResponse::Text(500, std::string("internal error: ") + e.what() + "\n");
    } catch (...) {
      return HttpResponse::Text(500, "internal error\n");
    }
  }
  return HttpResponse::Text(404, "not found\n");
}

bool TokenMatches(std::string_view given, std::string_view expected) {
  if (expected.empty()) return false;
  // Every offered byte is compared against some expected byte, with no early exit, so the time
  // depends on the offered length only.
  unsigned difference = given.size() == expected.size() ? 0u : 1u;
  for (size_t i = 0; i < given.size(); ++i) {
    difference |= static_cast<unsigned char>(given[i]) ^
                  static_cast<unsigned char>(expected[i % expected.size()]);
  }
  return difference == 0;
}

bool BearerTokenMatches(const HttpRequest& request, std::string_view expected) {
  std::string_view value = request.Header("authorization");
  constexpr std::string_view kScheme = "bearer ";
  if (value.size() < kScheme.size()) return false;
  for (size_t i = 0; i < kScheme.size(); ++i) {
    const char c = value[i];
    const char lower = (c >= 'A' && c <= 'Z') ? static_cast<char>(c - 'A' + 'a') : c;
    if (lower != kScheme[i]) return false;  // the scheme is case-insensitive (RFC 9110 §11.1)
  }
  value.remove_prefix(kScheme.size());
  while (!value.empty() && value.front() == ' ') value.remove_prefix(1);
  while (!value.empty() && value.back() == ' ') value.remove_suffix(1);
  return TokenMatches(value, expected);
}

}  // namespace codedrift
