#include "routes.h"

#include <fstream>
#include <sstream>

#include <nlohmann/json.hpp>

#include "api_json.h"
#include "daemon.h"
#include "metrics.h"
#include "status_page.h"

namespace codedrift {
namespace {

HttpResponse JsonError(int status, const std::string& message) {
  return HttpResponse::Json(status, nlohmann::json{{"error", message}}.dump() + "\n");
}

HttpResponse Unauthorized() {
  HttpResponse response = JsonError(401,
                                    "this endpoint needs the admin token: "
                                    "Authorization: Bearer <token>");
  response.headers.emplace_back("WWW-Authenticate", "Bearer");
  return response;
}

}  // namespace

std::shared_ptr<const HttpRouter> BuildRouter(Daemon& daemon) {
  auto router = std::make_shared<HttpRouter>();
  router->Add("GET", "/metrics", [&daemon](const HttpRequest&) {
    HttpResponse response;
    response.content_type = std::string(DaemonMetrics::kContentType);
    response.body = daemon.RenderMetrics();
    return response;
  });
  router->Add("GET", "/healthz",
              [](const HttpRequest&) { return HttpResponse::Json(200, "{\"status\":\"ok\"}\n"); });
  router->Add("GET", "/", [](const HttpRequest&) {
    HttpResponse response;
    response.content_type = "text/html; charset=utf-8";
    response.body = std::string(StatusPageHtml());
    return response;
  });
  router->Add("GET", "/api/v1/models", [&daemon](const HttpRequest&) {
    nlohmann::json models = nlohmann::json::array();
    for (const ModelView& view : daemon.Views()) models.push_back(ModelJson(view, false));
    return HttpResponse::Json(200, nlohmann::json{{"models", models}}.dump() + "\n");
  });
  router->Add("GET", "/api/v1/models/{stream}/{model}", [&daemon](const HttpRequest& request) {
    auto view = daemon.View(request.params.at("stream"), request.params.at("model"));
    if (!view) return JsonError(404, "no such model");
    return HttpResponse::Json(200, ModelJson(*view, true).dump() + "\n");
  });
  router->Add("GET", "/api/v1/models/{stream}/{model}/proposal",
              [&daemon](const HttpRequest& request) {
                auto view = daemon.View(request.params.at("stream"), request.params.at("model"));
                if (!view) return JsonError(404, "no such model");
                if (!view->latest_proposal) return JsonError(404, "no proposal written yet");
                // The path is the daemon's own record of what it wrote, never the request's.
                std::ifstream in(*view->latest_proposal);
                if (!in) return JsonError(500, "proposal file is gone: " + *view->latest_proposal);
                std::ostringstream text;
                text << in.rdbuf();
                HttpResponse response;
                response.content_type = "application/yaml; charset=utf-8";
                response.body = text.str();
                return response;
              });
  router->Add(
      "POST", "/api/v1/models/{stream}/{model}/proposal", [&daemon](const HttpRequest& request) {
        if (!daemon.Authorized(request)) return Unauthorized();
        if (!daemon.View(request.params.at("stream"), request.params.at("model"))) {
          return JsonError(404, "no such model");
        }
        auto written =
            daemon.WriteProposalNow(request.params.at("stream"), request.params.at("model"));
        if (!written.ok()) return JsonError(503, written.error().message);
        return HttpResponse::Json(200, nlohmann::json{{"proposal", written.value()}}.dump() + "\n");
      });
  router->Add("POST", "/api/v1/reload", [&daemon](const HttpRequest& request) {
    if (!daemon.Authorized(request)) return Unauthorized();
    auto reloaded = daemon.Reload();
    if (!reloaded.ok()) return JsonError(400, reloaded.error().message);
    return HttpResponse::Json(200, "{\"reloaded\":true}\n");
  });
  return router;
}

}  // namespace codedrift
