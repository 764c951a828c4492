#pragma once
// The local HTTP server of `lampwright serve`: the JSON API (docs/serve-api.md) on the library,
// and the one page embedded from web/. It computes nothing itself: requests are checked and turned
// into library calls, answers are the report/ JSON documents.
//
// Safety of a local server: it binds where it is told (the command binds loopback unless --host
// says otherwise); it answers only requests whose Host header names the bound address and port
// (a page on another site cannot reach it through DNS rebinding) and whose Origin, when sent, is
// the page itself; bodies are limited in size and requests in rate; no path on the file system is
// taken from a request (a recipe comes as text through the recipe parser, and may not name files).
#include "lampwright/core/embedded_data.hpp"
#include "lampwright/led/layer.hpp"
#include "lampwright/phosphor/recipe.hpp"

#include <cstddef>
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <vector>

namespace lampwright {

// The page's files (web/*.html, *.js, *.css), compiled in by cmake/EmbedData.cmake.
std::span<const EmbeddedFile> web_assets();

namespace serve {

struct ServerConfig {
    std::string host = "127.0.0.1";
    int port = 0;                                // 0: any free port (ServerHandle::port tells which)
    std::optional<Recipe> recipe;                // the recipe the page opens with (none: an empty blend)
    std::optional<LayerDesign> design;           // or an LED layer design (loadings and thickness)
    std::vector<std::string> phosphor_folders;   // --phosphors: the library the page offers
    std::size_t max_body_bytes = 1 << 20;        // larger bodies get 413
    int max_requests_per_second = 200;           // beyond: 429 (a debounced page sends a few a second)
    std::string cautions;                        // shown on the page (the command's safety notice)
};

class Server {
public:
    explicit Server(ServerConfig config);
    ~Server();  // stops the server and any running fit
    Server(const Server&) = delete;
    Server& operator=(const Server&) = delete;

    // Binds the address; returns the port. Throws lampwright::Error when it cannot bind.
    int bind();
    // Serves until stop() (call after bind, usually on a thread of its own).
    void run();
    // Ends run() (from any thread; also when run() has not begun listening yet).
    void stop();
    bool running() const;  // run() is listening
    int port() const;

private:
    struct Impl;
    std::unique_ptr<Impl> impl_;
};

}  // namespace serve
}  // namespace lampwright
