// HttpRouter, DecodePath and the admin-token check: routing, strict decoding, path tricks.
#include "http_router.h"

#include <stdexcept>
#include <string>
#include <vector>

#include <gtest/gtest.h>

namespace codedrift {
namespace {

HttpRequest Get(std::string path, std::string method = "GET") {
  HttpRequest request;
  request.method = std::move(method);
  request.target = path;
  request.path = std::move(path);
  return request;
}

// A router with the daemon's routes (DESIGN.md §5 "HTTP") whose handlers record what they saw.
class HttpRouterTest : public ::testing::Test {
 protected:
  void SetUp() override {
    auto record = [this](std::string name) {
      return [this, name](const HttpRequest& request) {
        calls_.push_back(name);
        last_ = request;
        return HttpResponse::Text(200, name);
      };
    };
    router_.Add("GET", "/metrics", record("metrics"));
    router_.Add("GET", "/", record("page"));
    router_.Add("GET", "/api/v1/models", record("models"));
    router_.Add("GET", "/api/v1/models/{stream}/{model}", record("model"));
    router_.Add("GET", "/api/v1/models/{stream}/{model}/proposal", record("proposal"));
    router_.Add("POST", "/api/v1/reload", record("reload"));
  }

  HttpRouter router_;
  std::vector<std::string> calls_;
  HttpRequest last_;
};

TEST_F(HttpRouterTest, ExactPathsReachTheirHandlers) {
  EXPECT_EQ(router_.Route(Get("/metrics")).body, "metrics");
  EXPECT_EQ(router_.Route(Get("/")).body, "page");
  EXPECT_EQ(router_.Route(Get("/api/v1/models")).body, "models");
  EXPECT_EQ(router_.Route(Get("/api/v1/reload", "POST")).body, "reload");
  EXPECT_EQ(calls_, (std::vector<std::string>{"metrics", "page", "models", "reload"}));
}

TEST_F(HttpRouterTest, PatternsFillParameters) {
  HttpResponse response = router_.Route(Get("/api/v1/models/uplink/bytes"));
  EXPECT_EQ(response.status, 200);
  EXPECT_EQ(response.body, "model");
  EXPECT_EQ(last_.params.at("stream"), "uplink");
  EXPECT_EQ(last_.params.at("model"), "bytes");

  response = router_.Route(Get("/api/v1/models/link_2/tok-ens/proposal"));
  EXPECT_EQ(response.body, "proposal");
  EXPECT_EQ(last_.params.at("stream"), "link_2");
  EXPECT_EQ(last_.params.at("model"), "tok-ens");
  EXPECT_EQ(last_.segments,
            (std::vector<std::string>{"api", "v1", "models", "link_2", "tok-ens", "proposal"}));
}

TEST_F(HttpRouterTest, QueryIsNotPartOfThePath) {
  HttpRequest request = Get("/metrics");
  request.target = "/metrics?name=x";
  request.query = "name=x";
  EXPECT_EQ(router_.Route(request).status, 200);
  EXPECT_EQ(last_.query, "name=x");
}

// Unreserved characters may be percent-encoded and mean the same (RFC 3986 §2.3).
TEST_F(HttpRouterTest, PercentEncodedNameCharactersDecode) {
  EXPECT_EQ(router_.Route(Get("/api/v1/models/up%6Cink/bytes")).status, 200);
  EXPECT_EQ(last_.params.at("stream"), "uplink");
}

TEST_F(HttpRouterTest, UnknownPathsAre404) {
  for (const char* path : {"/nope", "/metrics/", "/api/v1/models/uplink", "/api/v1",
                           "/api/v1/models/uplink/bytes/proposal/x", "/METRICS"}) {
    EXPECT_EQ(router_.Route(Get(path)).status, 404) << path;
  }
  EXPECT_TRUE(calls_.empty());
}

// Path tricks: dot segments (RFC 3986 §5.2.4 would resolve them; we refuse them), encoded
// slashes and dots (RFC 3986 §2.1), NUL, and names outside [a-z0-9_-]{1,64} (DESIGN.md §5).
TEST_F(HttpRouterTest, PathTricksAre404WithoutReachingAHandler) {
  const std::string long_name(65, 'a');
  for (const std::string& path : std::vector<std::string>{
           "/api/v1/models/../../etc/passwd",
           "/api/v1/models/%2e%2e/%2e%2e/etc/passwd",
           "/api/v1/models/%2E%2E/bytes",
           "/api/v1/models/./bytes",
           "/api/v1/models/uplink/..",
           "/api/v1/models/up%2Flink/bytes",
           "/api/v1/models/up%2flink/bytes/proposal",
           "/api/v1/models/up%5Clink/bytes",
           "/api/v1/models/uplink/bytes%00",
           "/api/v1/models/uplink/by%0Ates",
           "/api/v1/models//bytes",
           "/api/v1/models/Uplink/bytes",
           "/api/v1/models/up.link/bytes",
           "/api/v1/models/up%20link/bytes",
           "/api/v1/models/" + long_name + "/bytes",
           "/api/v1/models/uplink/%C3%A9",
           "/../metrics",
       }) {
    EXPECT_EQ(router_.Route(Get(path)).status, 404) << path;
  }
  EXPECT_TRUE(calls_.empty());
  // The longest allowed name still matches.
  EXPECT_EQ(router_.Route(Get("/api/v1/models/" + std::string(64, 'a') + "/bytes")).status, 200);
}

// A '%' not followed by two hex digits is not a valid URI (RFC 3986 §2.1); nor is a target
// that is not origin-form (RFC 9112 §3.2.1).
TEST_F(HttpRouterTest, MalformedPathsAre400) {
  for (const char* path :
       {"/api/v1/models/%zz/bytes", "/metrics%4", "/metrics%", "*", "metrics", ""}) {
    EXPECT_EQ(router_.Route(Get(path)).status, 400) << path;
  }
  EXPECT_TRUE(calls_.empty());
}

// 405 responses must carry Allow (RFC 9110 §15.5.6).
TEST_F(HttpRouterTest, WrongMethodIs405WithAllow) {
  HttpResponse response = router_.Route(Get("/api/v1/reload"));
  EXPECT_EQ(response.status, 405);
  ASSERT_EQ(response.headers.size(), 1u);
  EXPECT_EQ(response.headers[0].first, "Allow");
  EXPECT_EQ(response.headers[0].second, "POST");

  response = router_.Route(Get("/metrics", "DELETE"));
  EXPECT_EQ(response.status, 405);
  ASSERT_EQ(response.headers.size(), 1u);
  EXPECT_EQ(response.headers[0].second, "GET, HEAD");
  EXPECT_TRUE(calls_.empty());
}

TEST_F(HttpRouterTest, HeadIsAnsweredByGet) {
  EXPECT_EQ(router_.Route(Get("/metrics", "HEAD")).status, 200);
  EXPECT_EQ(last_.method, "HEAD");
}

TEST_F(HttpRouterTest, HandlerExceptionBecomes500) {
  router_.Add("GET", "/boom",
              [](const HttpRequest&) -> HttpResponse { throw std::runtime_error("kaput"); });
  const HttpResponse response = router_.Route(Get("/boom"));
  EXPECT_EQ(response.status, 500);
  EXPECT_NE(response.body.find("kaput"), std::string::npos);
}

TEST(DecodePath, SplitsAndDecodesSegments) {
  std::vector<std::string> segments;
  EXPECT_EQ(DecodePath("/", &segments), PathVerdict::kOk);
  EXPECT_TRUE(segments.empty());
  EXPECT_EQ(DecodePath("/a%20b/c", &segments), PathVerdict::kOk);
  EXPECT_EQ(segments, (std::vector<std::string>{"a b", "c"}));
  // "%41" is 'A' (RFC 3986 §2.1, ASCII 0x41).
  EXPECT_EQ(DecodePath("/%41%62", &segments), PathVerdict::kOk);
  EXPECT_EQ(segments, (std::vector<std::string>{"Ab"}));
  EXPECT_EQ(DecodePath("/a/%2e%2e", &segments), PathVerdict::kRejected);
  EXPECT_TRUE(segments.empty());
  EXPECT_EQ(DecodePath("/a/%G0", &segments), PathVerdict::kMalformed);
}

TEST(TokenMatches, OnlyTheExactTokenMatches) {
  EXPECT_TRUE(TokenMatches("s3cret-token", "s3cret-token"));
  EXPECT_FALSE(TokenMatches("s3cret-tokeN", "s3cret-token"));
  EXPECT_FALSE(TokenMatches("S3cret-token", "s3cret-token"));
  EXPECT_FALSE(TokenMatches("s3cret", "s3cret-token"));
  EXPECT_FALSE(TokenMatches("s3cret-token-and-more", "s3cret-token"));
  // A repeated token must not match by wrapping around the expected one.
  EXPECT_FALSE(TokenMatches("abab", "ab"));
  EXPECT_FALSE(TokenMatches("", "s3cret-token"));
  EXPECT_FALSE(TokenMatches("", ""));  // no token configured: nothing is authorised
}

// "Authorization: Bearer <token>" (RFC 6750 §2.1); the scheme name is case-insensitive
// (RFC 9110 §11.1).
TEST(TokenMatches, BearerHeaderIsChecked) {
  HttpRequest request;
  EXPECT_FALSE(BearerTokenMatches(request, "tok"));
  request.headers["authorization"] = "Bearer tok";
  EXPECT_TRUE(BearerTokenMatches(request, "tok"));
  request.headers["authorization"] = "bearer tok";
  EXPECT_TRUE(BearerTokenMatches(request, "tok"));
  request.headers["authorization"] = "Bearer tok2";
  EXPECT_FALSE(BearerTokenMatches(request, "tok"));
  request.headers["authorization"] = "Basic dG9rOg==";
  EXPECT_FALSE(BearerTokenMatches(request, "tok"));
  request.headers["authorization"] = "Bearer ";
  EXPECT_FALSE(BearerTokenMatches(request, "tok"));
}

}  // namespace
}  // namespace codedrift
