// HTTP requests and responses as plain structs, the daemon's tiny router and the admin-token
// check. No sockets here (HttpServer in http_server.h feeds the router), so routing and path
// decoding are tested without a network.
#pragma once

#include <functional>
#include <map>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace codedrift {

// One parsed request, as a handler sees it.
struct HttpRequest {
  std::string method;                 // as sent: "GET", "POST", ...
  std::string target;                 // the raw request-target: "/api/v1/models/a/b?x=1"
  std::string path;                   // target before '?', still percent-encoded
  std::string query;                  // target after '?', still percent-encoded ("" when none)
  std::vector<std::string> segments;  // decoded path segments ("/" has none)
  std::map<std::string, std::string> params;   // pattern parameters: "stream" -> "uplink"
  std::map<std::string, std::string> headers;  // names lower-cased; repeats joined with ", "
  std::string body;

  // The header's value, or "" when absent; `name` in lower case.
  std::string_view Header(std::string_view name) const;
};

// A response a handler returns. Content-Length, Date-free framing and keep-alive are the
// server's job.
struct HttpResponse {
  int status = 200;
  std::string content_type = "text/plain; charset=utf-8";
  std::string body;
  std::vector<std::pair<std::string, std::string>> headers;  // extra headers, e.g. Allow

  static HttpResponse Text(int status, std::string body);
  static HttpResponse Json(int status, std::string body);
};

using HttpHandler = std::function<HttpResponse(const HttpRequest&)>;

// How a raw path decodes (see DecodePath).
enum class PathVerdict {
  kOk,
  kMalformed,  // not origin-form or a bad %-escape: 400
  kRejected,   // decodes to something no route may see ("..", "%2F", NUL, empty segment): 404
};

// Splits a raw path ("/a/b%20c") into percent-decoded segments. Strict: a segment that is
// empty, "." or "..", or that decodes to '/', '\\', NUL or another control byte rejects the
// whole path, so a handler never sees a name that could walk a file system.
PathVerdict DecodePath(std::string_view path, std::vector<std::string>* segments);

// Maps (method, path pattern) to handlers. A pattern is "/metrics" or
// "/api/v1/models/{stream}/{model}": literal segments match exactly, a {name} segment matches
// one decoded segment of [a-z0-9_-]{1,64} and lands in HttpRequest::params. A GET route also
// answers HEAD. Build it fully, then share it read-only: Route is thread-safe (const), Add is not.
class HttpRouter {
 public:
  // Later registrations of the same method and pattern replace earlier ones.
  void Add(std::string_view method, std::string_view pattern, HttpHandler handler);

  // Fills request.segments and request.params, then answers: the handler's response, or 400
  // (malformed path), 404 (no route; rejected path), 405 with Allow (route, other method) or 500
  // (the handler threw; nothing escapes).
  HttpResponse Route(HttpRequest request) const;

 private:
  struct RouteEntry {
    std::vector<std::string> segments;            // "{name}" marks a parameter
    std::map<std::string, HttpHandler> handlers;  // by method
  };
  static bool Matches(const RouteEntry& route, const std::vector<std::string>& segments,
                      std::map<std::string, std::string>* params);

  std::vector<RouteEntry> routes_;
};

// Compares an offered secret with the expected one in time that depends only on the offered
// length, never on where they differ. An empty expected token matches nothing.
bool TokenMatches(std::string_view given, std::string_view expected);

// True when the request carries "Authorization: Bearer <token>" with the expected token.
bool BearerTokenMatches(const HttpRequest& request, std::string_view expected);

}  // namespace codedrift
