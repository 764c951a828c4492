// The API of lampwright serve (docs/serve-api.md): the server started in-process on an ephemeral
// loopback port, called with cpp-httplib's client, its answers compared with the library's own
// results; and its refusals (DNS-rebinding Host, foreign Origin, oversized bodies, rate, recipes
// that name files, bad recipe text). The fit's progress/cancel callback of the optimiser too.
#include "test_support.hpp"

#include "cli/serve_server.hpp"
#include "lampwright/design/optimiser.hpp"
#include "lampwright/io/toml_access.hpp"
#include "lampwright/led/layer_design.hpp"
#include "lampwright/led/layer_fit.hpp"
#include "lampwright/report/layer_report.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/report/blend_report.hpp"

#include <httplib.h>
#include <nlohmann/json.hpp>

#include <chrono>
#include <thread>

using namespace lampwright;
using json = nlohmann::ordered_json;

namespace {

// The server on 127.0.0.1, any free port, serving a thread of its own for the test's life.
struct RunningServer {
    serve::Server server;
    std::thread thread;
    int port = 0;
    explicit RunningServer(serve::ServerConfig c) : server(std::move(c)) {
        port = server.bind();
        thread = std::thread([this] { server.run(); });
        for (int k = 0; k < 2000 && !server.running(); ++k) std::this_thread::sleep_for(std::chrono::milliseconds(1));
    }
    ~RunningServer() {
        server.stop();
        thread.join();
    }
    httplib::Client client() const {
        httplib::Client c("127.0.0.1", port);
        c.set_read_timeout(10, 0);
        return c;
    }
};

serve::ServerConfig triband_config() {
    serve::ServerConfig c;
    c.recipe = load_recipe(lwtest::example_recipe("triband_4000K.toml"));
    return c;
}

json components(const BlendInput& b) {
    json a = json::array();
    for (const auto& c : b.components) a.push_back({{"id", c.label}, {"mass_fraction", c.mass_fraction}});
    return a;
}

json post(httplib::Client& c, const std::string& path, const json& body, int* status = nullptr) {
    const auto res = c.Post(path.c_str(), body.dump(), "application/json");
    REQUIRE(res);
    if (status) *status = res->status;
    return json::parse(res->body);
}

}  // namespace

TEST_CASE("serve API: an evaluation is blend --format json's document for the same fractions") {
    RunningServer s(triband_config());
    auto c = s.client();
    BlendInput b = load_recipe(lwtest::example_recipe("triband_4000K.toml")).blend;
    b.components[0].mass_fraction = 0.5;  // a slider moved
    int status = 0;
    const json answer = post(c, "/api/evaluate", {{"components", components(b)}, {"target", {{"kind", "ansi"}, {"nominal_K", 4000}}}}, &status);
    CHECK(status == 200);
    // The library's own result, through the one writer `blend --format json` uses.
    const json direct = blend_document_json(evaluate_blend(b), b);
    CHECK(answer["blend"] == direct);
    CHECK(answer["blend"]["u_prime"].get<double>() == direct["u_prime"].get<double>());
    CHECK(answer["blend"]["Ra"].get<double>() == direct["Ra"].get<double>());
    // The target: ANSI C78.377-2017 Table 1, 4000 K class centre x 0.3813, y 0.3797 (data/targets,
    // partly from memory) and its u'v' by CIE 15:2004 eq. 8.8: u' = 4x/(-2x+12y+3), v' = 9y/(...).
    const json& t = answer["target"];
    CHECK(t["x"].get<double>() == doctest::Approx(0.3813));
    CHECK(t["y"].get<double>() == doctest::Approx(0.3797));
    const double d = -2 * 0.3813 + 12 * 0.3797 + 3;
    CHECK(t["u_prime"].get<double>() == doctest::Approx(4 * 0.3813 / d).epsilon(1e-12));
    CHECK(t["v_prime"].get<double>() == doctest::Approx(9 * 0.3797 / d).epsilon(1e-12));
    // The drawings are there, with the parts the page shows.
    const auto& charts = answer["charts"];
    CHECK(charts["spectrum_svg"].get<std::string>().find("Y2O3:Eu3+") != std::string::npos);
    CHECK(charts["uv_svg"].get<std::string>().find("tolerance-region") != std::string::npos);
    CHECK(charts["uv_svg"].get<std::string>().find("isotherm") != std::string::npos);
    CHECK(charts["cvg_svg"].get<std::string>().find("cvg-chart") != std::string::npos);
}

TEST_CASE("serve API: state lists the recipe, the library and the targets") {
    RunningServer s(triband_config());
    auto c = s.client();
    const auto res = c.Get("/api/state");
    REQUIRE(res);
    CHECK(res->status == 200);
    const json st = json::parse(res->body);
    CHECK(st["recipe"]["components"].size() == 3);
    CHECK(st["phosphors"].size() == PhosphorLibrary::builtin().all().size());
    // ANSI C78.377-2017 Table 1 has ten nominal classes, 2200 to 6500 K.
    CHECK(st["targets"]["ansi_c78377"].size() == 10);
    // The recipe is a 4000 K blend (examples/recipes/triband_4000K.toml): the nearest class.
    CHECK(st["default_target"]["nominal_K"] == 4000);
    const auto page = c.Get("/");
    REQUIRE(page);
    CHECK(page->status == 200);
    CHECK(page->body.find("<script src=\"/app.js\">") != std::string::npos);
    CHECK(c.Get("/etc/passwd")->status == 404);
}

TEST_CASE("serve API: requests naming another host, from another origin, too large or too many are refused") {
    serve::ServerConfig cfg = triband_config();
    cfg.max_requests_per_second = 5;
    RunningServer s(std::move(cfg));
    auto c = s.client();
    // DNS rebinding: a name that resolves to 127.0.0.1 still arrives with its own Host header.
    const auto rebound = c.Get("/api/state", httplib::Headers{{"Host", "attacker.example:" + std::to_string(s.port)}});
    REQUIRE(rebound);
    CHECK(rebound->status == 403);
    CHECK(json::parse(rebound->body)["error"].get<std::string>().find("attacker.example") != std::string::npos);
    const auto foreign = c.Get("/api/state", httplib::Headers{{"Origin", "http://attacker.example"}});
    REQUIRE(foreign);
    CHECK(foreign->status == 403);
    // Bodies above 1 MiB: 413 Payload Too Large (RFC 9110 15.5.14).
    std::this_thread::sleep_for(std::chrono::milliseconds(1100));  // a fresh rate window
    const auto big = c.Post("/api/recipe/load", std::string((1 << 20) + 16, ' '), "application/json");
    REQUIRE(big);
    CHECK(big->status == 413);
    // Twenty requests at once against five a second: some get 429 Too Many Requests (RFC 6585 4).
    std::this_thread::sleep_for(std::chrono::milliseconds(1100));
    int refused = 0, answered = 0;
    for (int k = 0; k < 20; ++k) {
        const auto r = c.Get("/app.css");
        REQUIRE(r);
        (r->status == 429 ? refused : answered) += 1;
    }
    CHECK(refused >= 10);
    CHECK(answered >= 5);
}

TEST_CASE("serve API: a bad recipe text gives an error naming the line and the problem") {
    RunningServer s(triband_config());
    auto c = s.client();
    int status = 0;
    const std::string misspelt = "name = \"x\"\nexcitation_nm = 253.7\n\n[[component]]\nphosphor = \"Y2O3:Eu3+\"\nmass_fracion = 0.5\n";
    json e = post(c, "/api/recipe/load", {{"toml", misspelt}}, &status);
    CHECK(status == 422);
    CHECK(e["line"] == 6);
    CHECK(e["problem"].get<std::string>().find("mass_fracion") != std::string::npos);
    // A recipe from the page may name no file on disk.
    const std::string with_folder = "name = \"x\"\nexcitation_nm = 253.7\nphosphor_folders = [\"/etc\"]\n";
    e = post(c, "/api/recipe/load", {{"toml", with_folder}}, &status);
    CHECK(status == 422);
    CHECK(e["line"] == 3);
    CHECK(e["problem"].get<std::string>().find("names files on disk") != std::string::npos);
    const std::string with_spectrum =
        "name = \"x\"\nexcitation_nm = 253.7\n\n[[component]]\nspectrum = \"/etc/passwd\"\nabsorption = 1\nquantum_efficiency = 1\nmass_fraction = 1\n";
    e = post(c, "/api/recipe/load", {{"toml", with_spectrum}}, &status);
    CHECK(status == 422);
    CHECK(e["line"] == 5);
    // Not JSON at all, and an unknown phosphor.
    const auto garbage = c.Post("/api/evaluate", "{not json", "application/json");
    REQUIRE(garbage);
    CHECK(garbage->status == 400);
    e = post(c, "/api/evaluate", {{"components", {{{"id", "unobtainium"}, {"mass_fraction", 1}}}}, {"target", {{"kind", "ansi"}, {"nominal_K", 4000}}}},
             &status);
    CHECK(status == 400);
    CHECK(e["error"].get<std::string>().find("unobtainium") != std::string::npos);
}

TEST_CASE("serve API: a loaded recipe text is evaluated as the recipe parser reads it; export writes what blend reads") {
    RunningServer s(triband_config());
    auto c = s.client();
    const std::string text = lwtest::slurp(lwtest::example_recipe("multiband_5000K.toml"));
    int status = 0;
    const json loaded = post(c, "/api/recipe/load", {{"toml", text}}, &status);
    REQUIRE(status == 200);
    CHECK(loaded["components"].size() == 4);
    const Recipe direct = recipe_from_toml(TomlDoc(text, "uploaded recipe"), {});
    const json target{{"kind", "cct"}, {"cct_K", 5000}, {"duv", 0}};
    const json answer = post(c, "/api/evaluate", {{"components", loaded["components"]}, {"target", target}}, &status);
    CHECK(status == 200);
    CHECK(answer["blend"] == blend_document_json(evaluate_blend(direct.blend), direct.blend));
    // Export, then read the text back with the recipe parser: the same blend.
    const json exported = post(c, "/api/recipe/export", {{"components", loaded["components"]}}, &status);
    CHECK(status == 200);
    const Recipe back = recipe_from_toml(TomlDoc(exported["toml"].get<std::string>(), "exported"), {});
    CHECK(blend_document_json(evaluate_blend(back.blend), back.blend) == answer["blend"]);
}

TEST_CASE("serve API: a fit runs as a job, and gives the optimiser's fractions") {
    RunningServer s(triband_config());
    auto c = s.client();
    const Recipe r = load_recipe(lwtest::example_recipe("triband_4000K.toml"));
    int status = 0;
    const json started = post(c, "/api/fit", {{"components", components(r.blend)}, {"target", {{"kind", "ansi"}, {"nominal_K", 3500}}}}, &status);
    REQUIRE(status == 200);
    const int job = started["job"];
    json st;
    for (int k = 0; k < 500; ++k) {
        st = json::parse(c.Get(("/api/fit/" + std::to_string(job)).c_str())->body);
        if (st["state"] != "running") break;
        std::this_thread::sleep_for(std::chrono::milliseconds(10));
    }
    REQUIRE(st["state"] == "done");
    FitProblem p;
    p.blend = r.blend;
    p.target = target_ansi_c78377(3500);
    const FitResult direct = solve(p);
    CHECK(st["result"]["feasible"] == direct.feasible);
    REQUIRE(st["result"]["components"].size() == 3);
    for (std::size_t i = 0; i < 3; ++i) CHECK(st["result"]["components"][i]["mass_fraction"].get<double>() == direct.mass_fractions[i]);
    CHECK(c.Get("/api/fit/99999")->status == 404);
    CHECK(c.Post("/api/fit/99999/cancel", "{}", "application/json")->status == 404);
}

TEST_CASE("optimiser: the progress callback sees every start and can stop the fit") {
    // Four components, maximum Ra: NLopt from n + 2 = 6 deterministic starts (optimiser.hpp).
    FitProblem p = lwtest::fit_problem("multiband_5000K.toml", target_cct(5000), FitObjective::ra);
    FitOptions o;
    o.max_evaluations = 300;
    std::vector<std::pair<int, int>> calls;
    o.progress = [&](int done, int total) {
        calls.emplace_back(done, total);
        return true;
    };
    const FitResult r = solve(p, o);
    REQUIRE(!calls.empty());
    CHECK(calls.front() == std::pair{0, 6});
    CHECK(static_cast<int>(calls.size()) == r.starts);
    FitOptions stop = o;
    int seen = 0;
    stop.progress = [&](int done, int) {
        ++seen;
        return done < 2;  // stop before the third start
    };
    CHECK_THROWS_AS(solve(p, stop), FitCancelled);
    CHECK(seen == 3);
}

TEST_CASE("serve API: an LED layer design is evaluated as layer --format json, exported as a design file") {
    serve::ServerConfig cfg;
    const std::string path = std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/layers/module395_150um.toml";
    cfg.design = load_layer_design(path);
    RunningServer s(std::move(cfg));
    auto c = s.client();
    const json st = json::parse(c.Get("/api/state")->body);
    CHECK(st["recipe"]["kind"] == "layer");
    CHECK(st["recipe"]["thickness_um"] == 150);
    json comps = json::array();
    for (const auto& k : st["recipe"]["components"]) comps.push_back({{"id", k["id"]}, {"loading", k["loading"]}});
    comps[0]["loading"] = 0.1;  // a slider moved
    const json body{{"components", comps}, {"thickness_um", 120}, {"target", {{"kind", "cct"}, {"cct_K", 4000}}}};
    int status = 0;
    const json answer = post(c, "/api/evaluate", body, &status);
    REQUIRE(status == 200);
    LayerDesign d = load_layer_design(path);
    d.components[0].loading = 0.1;
    d.thickness_um = 120;
    CHECK(answer["layer"] == layer_document_json(evaluate_layer_design(d)));
    const json exported = post(c, "/api/recipe/export", body, &status);
    REQUIRE(status == 200);
    const LayerDesign back = layer_design_from_toml(TomlDoc(exported["toml"].get<std::string>(), "exported"));
    CHECK(back.thickness_um == 120);
    CHECK(back.components[0].loading == 0.1);
    // Blend-only constraints are refused for a layer fit.
    json fit = body;
    fit["min_rf"] = 80;
    const json refused = post(c, "/api/fit", fit, &status);
    CHECK(status == 400);
    CHECK(refused["error"].get<std::string>().find("min_rf") != std::string::npos);
}

TEST_CASE("layer fit: the progress callback is asked before the first start and can stop the fit") {
    LayerFitProblem p;
    p.design = load_layer_design(std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/layers/module395_150um.toml");
    p.target = target_cct(4000);
    // Three loadings: the start and each loading halved and doubled, 1 + 2 x 3 = 7 starts (layer_fit.cpp).
    std::vector<std::pair<int, int>> calls;
    CHECK_THROWS_AS(fit_layer(p, 3000,
                              [&](int done, int total) {
                                  calls.emplace_back(done, total);
                                  return false;
                              }),
                    FitCancelled);
    REQUIRE(calls.size() == 1);
    CHECK(calls.front() == std::pair{0, 7});
}
