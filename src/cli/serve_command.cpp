// lampwright serve: the local formulation page (a small HTTP server on loopback, serve_server.hpp).
#include "cli_common.hpp"
#include "serve_server.hpp"

#include "lampwright/io/toml_access.hpp"
#include "lampwright/led/layer_design.hpp"
#include "lampwright/phosphor/recipe.hpp"

#include <fmt/format.h>

#include <csignal>
#include <iostream>
#include <pthread.h>
#include <thread>

namespace po = boost::program_options;

namespace lampwright::cli {

namespace {
const NumberRange kPortRange{.min = 0, .max = 65535, .unit = "(0 = any free port)", .whole = true};

bool is_loopback(const std::string& host) { return host == "127.0.0.1" || host == "::1" || host == "localhost"; }
}  // namespace

int run_serve(int argc, char** argv) {
    po::options_description opts(std::string(R"(Usage: lampwright serve [RECIPE.toml | DESIGN.toml] [--port N] [--host 127.0.0.1] [--phosphors DIR]

Serves the interactive formulation page on this machine: move a component's mass fraction (or, for
an LED layer design, a phosphor's loading and the layer thickness) and see
the spectrum, the chromaticity against the target, Ra and R1-R14, Rf/Rg and the colour vector
graphic at once; fit, undo, save and load recipes (the same TOML that 'blend' reads). The page and
its API are answered only on the address and port printed at the start (see README, "Interactive
formulation page"; the API in docs/serve-api.md). Ctrl-C stops the server.

)") + kSafetyNotice + "\nOptions");
    std::string host = "127.0.0.1";
    int port = 8017;
    std::vector<std::string> folders, recipes;
    opts.add_options()("help,h", "show this help")
        ("host", po::value(&host), "address to listen on (default 127.0.0.1, this machine only; any other is reachable from the network)")
        ("phosphors", po::value(&folders), "a folder of your own phosphor files (*.toml); repeatable");
    add_number_option(opts, "port", &port, kPortRange, "TCP port (default 8017)");
    po::variables_map vm;
    if (!parse_command_line(argc, argv, opts, "recipe", &recipes, vm, "serve")) return kExitOk;
    if (recipes.size() > 1) throw UsageError{"serve: give at most one recipe file (see lampwright serve --help)"};
    if (host == "localhost") host = "127.0.0.1";
    if (host.empty() || host.size() > 64 || host.find_first_not_of("0123456789abcdefABCDEF.:") != std::string::npos)
        throw UsageError{fmt::format("serve: --host must be a numeric IPv4 or IPv6 address of this machine, not '{}'", host)};

    // Every request's Host header must name the address listened on (DNS rebinding), so a
    // wildcard address, which no browser puts in a Host header, would refuse every request.
    if (host == "0.0.0.0" || host == "::" || host == "[::]")
        throw UsageError{"serve: --host takes one address of this machine (the page answers to http://ADDRESS:PORT/ only), not the wildcard " + host};
    serve::ServerConfig config;
    config.host = host;
    config.port = port;
    config.phosphor_folders = folders;
    config.cautions = kSafetyNotice;
    if (!recipes.empty()) {
        const TomlDoc doc = TomlDoc::from_file(recipes.front());
        if (is_layer_design(doc)) {
            config.design = layer_design_from_toml(doc, folders);
        } else {
            config.recipe = load_recipe(recipes.front(), folders);
            for (const auto& n : config.recipe->notes) print_note(n);
        }
    }

    // SIGINT and SIGTERM are taken by a thread of their own (sigwait), so stopping the server
    // happens outside a signal handler; every other thread inherits the blocked mask.
    sigset_t stop_signals;
    sigemptyset(&stop_signals);
    sigaddset(&stop_signals, SIGINT);
    sigaddset(&stop_signals, SIGTERM);
    pthread_sigmask(SIG_BLOCK, &stop_signals, nullptr);

    serve::Server server(std::move(config));
    const int bound = naming_input("--host " + host, [&] { return server.bind(); });
    std::cerr << kSafetyNotice;
    if (!is_loopback(host))
        print_warning(fmt::format("serve: listening on {}, which other machines may reach: anyone who can connect can use the page and its API "
                                  "(no password). Use the default 127.0.0.1 unless you mean it.",
                                  host));
    const std::string url = fmt::format("http://{}:{}/", host.find(':') != std::string::npos ? "[" + host + "]" : host, bound);
    std::cout << "lampwright serve: open " << url << " in a browser; Ctrl-C stops" << std::endl;

    std::thread stopper([&] {
        int sig = 0;
        sigwait(&stop_signals, &sig);
        server.stop();
    });
    server.run();
    // run() also returns when the server fails; wake the waiting thread so it can end.
    pthread_kill(stopper.native_handle(), SIGTERM);
    stopper.join();
    print_note("serve: stopped");
    return kExitOk;
}

}  // namespace lampwright::cli
