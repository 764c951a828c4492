// The HTTP side of `lampwright serve` (serve_server.hpp). Requests are JSON; every answer is JSON
// built in report/ (serve_report, blend_report, fit_report), or one of the page's embedded files.
#include "serve_server.hpp"

#include "lampwright/core/error.hpp"
#include "lampwright/core/text_encoding.hpp"
#include "lampwright/design/optimiser.hpp"
#include "lampwright/design/targets.hpp"
#include "lampwright/io/toml_access.hpp"
#include "lampwright/led/layer_design.hpp"
#include "lampwright/led/layer_fit.hpp"
#include "lampwright/report/layer_report.hpp"
#include "lampwright/report/blend_report.hpp"
#include "lampwright/report/fit_report.hpp"
#include "lampwright/report/serve_report.hpp"

#include <httplib.h>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <atomic>
#include <chrono>
#include <cmath>
#include <functional>
#include <map>
#include <mutex>
#include <thread>

namespace lampwright::serve {

namespace {

using json = nlohmann::ordered_json;

// A request the API refuses: HTTP status and a message (answered as {"error": message}).
struct ApiError {
    int status = 400;
    std::string message;
};

constexpr std::size_t kMaxComponents = 12;   // more than any recipe of the trade (common practice, no source)
constexpr std::size_t kMaxIdLength = 200;
constexpr std::size_t kKeptJobs = 8;         // finished fits kept for polling
// With the charset named, cpp-httplib leaves the answers uncompressed (it compresses a bare
// "application/json" when the browser accepts br or gzip): on loopback, Brotli on a 50 kB answer
// costs far more time than the bytes it saves.
constexpr const char* kJson = "application/json; charset=utf-8";

const json& member(const json& j, const char* key) {
    static const json null_value;
    if (!j.is_object()) throw ApiError{400, "the request body must be a JSON object"};
    const auto it = j.find(key);
    return it == j.end() ? null_value : *it;
}

// A number of the request within [lo, hi]; `fallback` when absent (none: required).
double number(const json& j, const char* key, double lo, double hi, std::optional<double> fallback = std::nullopt) {
    const json& v = member(j, key);
    if (v.is_null()) {
        if (fallback) return *fallback;
        throw ApiError{400, fmt::format("'{}' is missing", key)};
    }
    if (!v.is_number()) throw ApiError{400, fmt::format("'{}' must be a number", key)};
    const double x = v.get<double>();
    if (!std::isfinite(x) || x < lo || x > hi) throw ApiError{400, fmt::format("'{}' must lie in [{:g}, {:g}], not {:g}", key, lo, hi, x)};
    return x;
}
std::optional<double> optional_number(const json& j, const char* key, double lo, double hi) {
    if (member(j, key).is_null()) return std::nullopt;
    return number(j, key, lo, hi);
}
std::string text(const json& j, const char* key, std::size_t max_length, std::optional<std::string> fallback = std::nullopt) {
    const json& v = member(j, key);
    if (v.is_null() && fallback) return *fallback;
    if (!v.is_string()) throw ApiError{400, fmt::format("'{}' must be a string", key)};
    auto s = v.get<std::string>();
    if (s.size() > max_length) throw ApiError{400, fmt::format("'{}' is longer than {} characters", key, max_length)};
    return s;
}

// The target of a request: {"kind": "ansi", "nominal_K"} | {"kind": "flamp", "name", "steps"} |
// {"kind": "cct", "cct_K", "duv"} | {"kind": "xy", "x", "y"}; the ranges are fit's (fit_command.cpp).
Target target_of(const json& t) {
    const std::string kind = text(t, "kind", 16);
    try {
        if (kind == "ansi") return target_ansi_c78377(static_cast<int>(number(t, "nominal_K", 2200, 6500)));
        if (kind == "flamp") return target_ansi_c78376(text(t, "name", 16), number(t, "steps", 0.5, 20, kAnsiC78376Steps));
        if (kind == "cct") return target_cct(number(t, "cct_K", 1000, 25000), number(t, "duv", -0.05, 0.05, 0.0));
        if (kind == "xy") return target_xy(number(t, "x", 1e-6, 1 - 1e-6), number(t, "y", 1e-6, 1 - 1e-6));
    } catch (const Error& e) {
        throw ApiError{400, std::string("target: ") + e.what()};
    }
    throw ApiError{400, "target kind must be ansi, flamp, cct or xy, not '" + kind + "'"};
}

json error_json(const std::string& message) { return json{{"error", message}}; }

// A recipe error as the page shows it: where and what.
json input_error_json(const InputError& e) {
    return json{{"error", e.what()}, {"source", e.source()}, {"line", e.line()}, {"problem", e.problem()}};
}

const EmbeddedFile* asset(std::string_view name) {
    for (const auto& f : web_assets())
        if (f.path == name) return &f;
    return nullptr;
}

struct FitJob {
    std::atomic<int> done{0}, total{0};
    std::atomic<bool> cancel{false};
    std::mutex m;
    std::string state = "running";  // running | done | cancelled | failed
    json result;                    // fit_json plus "components" when done; {"error"} when failed
    std::thread worker;
};

}  // namespace

struct Server::Impl {
    ServerConfig config;
    httplib::Server http;
    int bound_port = 0;
    // run() and stop() may race (stop from a signal thread or a test right after start):
    // a stop before the listening loop has begun must still end it.
    std::atomic<bool> run_entered{false}, run_finished{false}, stopping{false};
    PhosphorLibrary library;

    std::mutex state_mutex;  // guards base and the jobs
    BlendInput base;         // the recipe the page edits (excitation, settings, component data)
    std::optional<LayerDesign> layer;  // or the LED layer design it edits (then `base` is unused)
    std::vector<std::string> notes;
    std::map<int, std::shared_ptr<FitJob>> jobs;
    int next_job = 1;

    std::mutex rate_mutex;
    std::chrono::steady_clock::time_point window_start = std::chrono::steady_clock::now();
    int window_count = 0;

    explicit Impl(ServerConfig c) : config(std::move(c)) {
        library = config.phosphor_folders.empty() ? PhosphorLibrary::builtin() : PhosphorLibrary::with_folders(config.phosphor_folders);
        if (config.design) {
            layer = config.design;
        } else if (config.recipe) {
            base = config.recipe->blend;
            notes = config.recipe->notes;
        } else {
            base.name = "new blend";
            base.excitation = Excitation::mercury();
        }
    }

    ~Impl() {
        std::vector<std::shared_ptr<FitJob>> all;
        {
            std::lock_guard lock(state_mutex);
            for (auto& [id, job] : jobs) all.push_back(job);
        }
        for (auto& job : all) {
            job->cancel = true;
            if (job->worker.joinable()) job->worker.join();
        }
    }

    // The Host values this server answers to: its address and port (and "localhost" for 127.0.0.1).
    bool host_allowed(const std::string& host) const {
        const std::string port = std::to_string(bound_port);
        const std::string& h = config.host;
        if (host == (h.find(':') != std::string::npos ? "[" + h + "]" : h) + ":" + port) return true;
        return h == "127.0.0.1" && host == "localhost:" + port;
    }

    bool rate_ok() {
        std::lock_guard lock(rate_mutex);
        const auto now = std::chrono::steady_clock::now();
        if (now - window_start >= std::chrono::seconds(1)) window_start = now, window_count = 0;
        return ++window_count <= config.max_requests_per_second;
    }

    // The components of a request, [{"id", <amount_key>}], as the model's components: one the
    // recipe or design has keeps its data (overrides, limits, grain data); any other id is a
    // library phosphor. Components at zero are left out (the models need positive amounts), or
    // kept at `zero_as` when it is above zero (a fit's starting point).
    template <class Component>
    std::vector<Component> components_of(const json& body, const char* amount_key, double max_amount, double Component::*amount,
                                         const std::vector<Component>& known, std::vector<std::string>* ids, double zero_as) {
        const json& comps = member(body, "components");
        if (!comps.is_array()) throw ApiError{400, fmt::format("'components' must be an array of {{\"id\", \"{}\"}}", amount_key)};
        if (comps.size() > kMaxComponents) throw ApiError{400, fmt::format("at most {} components", kMaxComponents)};
        std::vector<Component> out;
        for (const auto& c : comps) {
            const std::string id = text(c, "id", kMaxIdLength);
            double w = number(c, amount_key, 0, max_amount);
            if (ids) ids->push_back(id);
            if (!(w > 0)) {
                if (!(zero_as > 0)) continue;
                w = zero_as;
            }
            Component k;
            const auto it = std::find_if(known.begin(), known.end(), [&](const Component& x) { return x.label == id; });
            if (it != known.end()) {
                k = *it;
            } else if (const Phosphor* p = library.try_find(id)) {
                k.phosphor = *p;
                k.label = p->id;
            } else {
                throw ApiError{400, fmt::format("unknown phosphor '{}' (GET /api/state lists the library)", id)};
            }
            for (const auto& other : out)
                if (other.label == k.label) throw ApiError{400, fmt::format("'{}' is listed twice", id)};
            k.*amount = w;
            out.push_back(std::move(k));
        }
        if (out.empty()) throw ApiError{422, fmt::format("no component has a {} above zero", amount_key)};
        return out;
    }

    // A blend recipe: [{"id", "mass_fraction"}] (any positive scale) on the base recipe.
    BlendInput blend_of(const json& body, std::vector<std::string>* ids = nullptr, double zero_as = 0) {
        BlendInput b;
        {
            std::lock_guard lock(state_mutex);
            b = base;
        }
        b.components = components_of(body, "mass_fraction", 1e6, &BlendComponent::mass_fraction, b.components, ids, zero_as);
        return b;
    }

    std::optional<LayerDesign> layer_base() {
        std::lock_guard lock(state_mutex);
        return layer;
    }

    // An LED layer: [{"id", "loading"}] (phosphor mass fraction of the layer, 0-0.95) and
    // "thickness_um" (default: the design's).
    LayerDesign layer_of(const json& body, const LayerDesign& start, std::vector<std::string>* ids = nullptr, double zero_as = 0) {
        LayerDesign d = start;
        d.thickness_um = number(body, "thickness_um", 1, 5000, start.thickness_um);
        d.components = components_of(body, "loading", 0.95, &LayerComponent::loading, start.components, ids, zero_as);
        return d;
    }

    json recipe_json() {
        std::lock_guard lock(state_mutex);
        json j;
        json comps = json::array();
        if (layer) {
            j["kind"] = "layer";
            j["name"] = layer->name;
            j["excitation"] = layer->pump.describe();
            j["thickness_um"] = layer->thickness_um;
            for (const auto& c : layer->components)
                comps.push_back({{"id", c.label},
                                 {"phosphor", c.phosphor.id},
                                 {"loading", c.loading},
                                 {"min_loading", c.min_loading ? json(*c.min_loading) : json(nullptr)},
                                 {"max_loading", c.max_loading ? json(*c.max_loading) : json(nullptr)}});
        } else {
            j["kind"] = "blend";
            j["name"] = base.name;
            j["excitation"] = base.excitation.describe();
            for (const auto& c : base.components)
                comps.push_back({{"id", c.label},
                                 {"phosphor", c.phosphor.id},
                                 {"mass_fraction", c.mass_fraction},
                                 {"min_fraction", c.min_fraction ? json(*c.min_fraction) : json(nullptr)},
                                 {"max_fraction", c.max_fraction ? json(*c.max_fraction) : json(nullptr)}});
        }
        j["components"] = std::move(comps);
        j["notes"] = notes;
        return j;
    }

    // The ANSI C78.377 class nearest the base recipe's CCT (the page's first target), else 4000 K.
    json default_target() {
        int best = 4000;
        try {
            BlendInput b;
            {
                std::lock_guard lock(state_mutex);
                b = base;
            }
            std::optional<CctResult> cct;
            if (const auto d = layer_base()) cct = evaluate_layer_design(*d).operating.assessment.cct;
            else if (!b.components.empty()) cct = evaluate_blend(b).assessment.cct;
            if (cct && cct->valid) {
                double d = 1e300;
                for (const auto& c : ansi_c78377_classes())
                    if (std::abs(1e6 / c.cct_K - 1e6 / cct->cct_K) < d) d = std::abs(1e6 / c.cct_K - 1e6 / cct->cct_K), best = c.nominal_K;
            }
        } catch (const Error&) {
        }
        return {{"kind", "ansi"}, {"nominal_K", best}};
    }

    json state() {
        json j;
        j["recipe"] = recipe_json();
        j["phosphors"] = phosphors_json(library.all());
        j["targets"] = targets_catalogue_json();
        j["default_target"] = default_target();
        j["cautions"] = config.cautions;
        return j;
    }

    json evaluate(const json& body) {
        const auto t0 = std::chrono::steady_clock::now();
        const Target t = target_of(member(body, "target"));
        const double tol = number(body, "tolerance_uv_prime", 1e-5, 0.05, kDefaultFitToleranceUvPrime);
        auto elapsed = [&] { return std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - t0).count(); };
        if (const auto start = layer_base()) {
            const LayerDesign d = layer_of(body, *start);
            LayerEvaluation e;
            try {
                e = evaluate_layer_design(d);
            } catch (const Error& x) {
                throw ApiError{422, x.what()};
            }
            json j = serve_layer_evaluation_json(e, t, tol);
            j["ms"] = elapsed();
            return j;
        }
        const BlendInput b = blend_of(body);
        BlendResult r;
        try {
            r = evaluate_blend(b);
        } catch (const Error& e) {
            throw ApiError{422, e.what()};
        }
        json j = serve_evaluation_json(b, r, t, tol);
        j["ms"] = elapsed();
        return j;
    }

    // The fit of a request as work for a job thread: blend recipes through solve (the objectives
    // and constraints of `fit`), LED layers through fit_layer (its loadings, and the thickness
    // with "fit_thickness": true; Ra and R9 floors).
    std::function<json(const FitProgress&)> fit_work(const json& body) {
        std::vector<std::string> ids;
        const Target target = target_of(member(body, "target"));
        FitObjective objective{};
        try {
            objective = parse_fit_objective(text(body, "objective", 16, std::string("change")));
        } catch (const Error& e) {
            throw ApiError{400, e.what()};
        }
        const double r9_weight = number(body, "r9_weight", 0, 1, 0.5);
        const double tolerance = number(body, "tolerance_uv_prime", 1e-5, 0.05, kDefaultFitToleranceUvPrime);
        // The ranges of fit's --min-* options (fit_command.cpp).
        const auto min_ra = optional_number(body, "min_ra", -100, 100);
        const auto min_r9 = optional_number(body, "min_r9", -300, 100);
        if (const auto start = layer_base()) {
            for (const char* key : {"min_ler", "min_rf", "min_rg", "max_rg"})
                if (!member(body, key).is_null()) throw ApiError{400, fmt::format("'{}' applies to blend recipes, not to LED layer designs", key)};
            LayerFitProblem lp;
            // A component at zero starts the search at a trace, so the fit may bring it in.
            lp.design = layer_of(body, *start, &ids, 1e-3);
            lp.target = target;
            lp.objective = objective;
            lp.r9_weight = r9_weight;
            lp.tolerance_uv_prime = tolerance;
            lp.min_ra = min_ra;
            lp.min_r9 = min_r9;
            const json& ft = member(body, "fit_thickness");
            if (!ft.is_null() && !ft.is_boolean()) throw ApiError{400, "'fit_thickness' must be true or false"};
            lp.fit_thickness = ft.is_boolean() && ft.get<bool>();
            return [lp, ids](const FitProgress& progress) {
                const LayerFitResult r = fit_layer(lp, 3000, progress);
                json result = layer_fit_json(r);
                // The keys the page reads for both kinds of fit.
                result["feasible"] = r.feasible;
                result["message"] = r.message;
                result["method"] = "NLopt COBYLA on the log loadings";
                result["evaluations"] = r.evaluations;
                auto& comps = result["components"] = json::array();
                for (std::size_t i = 0; i < ids.size() && i < r.design.components.size(); ++i)
                    comps.push_back({{"id", ids[i]}, {"loading", r.design.components[i].loading}});
                result["thickness_um"] = r.design.thickness_um;
                return result;
            };
        }
        FitProblem p;
        p.blend = blend_of(body, &ids, 1e-3);
        p.target = target;
        p.objective = objective;
        p.r9_weight = r9_weight;
        p.tolerance_uv_prime = tolerance;
        p.min_ra = min_ra;
        p.min_r9 = min_r9;
        p.min_ler = optional_number(body, "min_ler", 0, 683);
        p.min_rf = optional_number(body, "min_rf", 0, 100);
        p.min_rg = optional_number(body, "min_rg", 1e-6, 200);
        p.max_rg = optional_number(body, "max_rg", 1e-6, 200);
        return [p, ids](const FitProgress& progress) {
            FitOptions options;
            options.progress = progress;
            const auto t0 = std::chrono::steady_clock::now();
            const FitResult r = solve(p, options);
            json result = fit_json(p, r, std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - t0).count());
            auto& comps = result["components"] = json::array();
            // Every page component is in the problem (those at zero from a trace), in order.
            for (std::size_t i = 0; i < ids.size() && i < r.mass_fractions.size(); ++i)
                comps.push_back({{"id", ids[i]}, {"mass_fraction", r.mass_fractions[i]}});
            return result;
        };
    }

    json start_fit(const json& body) {
        auto work = fit_work(body);
        auto job = std::make_shared<FitJob>();
        int id = 0;
        {
            std::lock_guard lock(state_mutex);
            for (const auto& [k, j] : jobs) {
                std::lock_guard jl(j->m);
                if (j->state == "running") throw ApiError{409, fmt::format("fit {} is still running (cancel it first)", k)};
            }
            // Forget the oldest finished jobs.
            while (jobs.size() >= kKeptJobs) {
                auto old = jobs.begin();
                if (old->second->worker.joinable()) old->second->worker.join();
                jobs.erase(old);
            }
            id = next_job++;
            jobs[id] = job;
        }
        job->worker = std::thread([job, work] {
            const FitProgress progress = [job](int done, int total) {
                job->done = done;
                job->total = total;
                return !job->cancel.load();
            };
            std::string state;
            json result;
            try {
                result = work(progress);
                state = "done";
            } catch (const FitCancelled&) {
                state = "cancelled";
            } catch (const std::exception& e) {
                state = "failed";
                result = error_json(e.what());
            }
            std::lock_guard lock(job->m);
            job->state = state;
            job->result = std::move(result);
        });
        return {{"job", id}};
    }

    std::shared_ptr<FitJob> job_of(const std::string& id_text) {
        std::lock_guard lock(state_mutex);
        const auto it = jobs.find(std::atoi(id_text.c_str()));
        if (it == jobs.end()) throw ApiError{404, "no such fit"};
        return it->second;
    }

    json fit_status(const std::string& id_text) {
        auto job = job_of(id_text);
        std::lock_guard lock(job->m);
        json j{{"job", std::atoi(id_text.c_str())}, {"state", job->state}, {"starts_done", job->done.load()}, {"starts_total", job->total.load()}};
        if (job->state != "running") j["result"] = job->result;
        return j;
    }

    json cancel_fit(const std::string& id_text) {
        auto job = job_of(id_text);
        job->cancel = true;
        return {{"job", std::atoi(id_text.c_str())}, {"cancel", true}};
    }

    json export_recipe(const json& body) {
        if (const auto start = layer_base()) {
            LayerDesign d = layer_of(body, *start);
            d.name = text(body, "name", 200, d.name);
            return {{"toml", "# Saved from the lampwright serve page.\n" + layer_design_to_toml(d)}};
        }
        BlendInput b = blend_of(body);
        b.name = text(body, "name", 200, b.name);
        return {{"toml", recipe_to_toml(b, {"Saved from the lampwright serve page."})}};
    }

    // A recipe uploaded as text: the same parser as a recipe file, but it may name no file (no
    // phosphor_folders, calibration or measured 'spectrum'): a page never chooses a path.
    json load_recipe_text(const json& body) {
        const std::string toml_text = text(body, "toml", config.max_body_bytes);
        const TomlDoc doc(toml_text, "uploaded recipe");
        const auto& root = doc.root();
        for (const char* key : {"phosphor_folders", "calibration"})
            if (root.contains(key))
                doc.fail(root.get(key), key, "names files on disk, which a recipe loaded in the page may not (start lampwright serve with the file instead)");
        if (const auto* comps = root.get_as<toml::array>("component"))
            for (const auto& c : *comps)
                if (const auto* t = c.as_table(); t && t->contains("spectrum"))
                    doc.fail(t->get("spectrum"), "component.spectrum",
                             "names a file on disk, which a recipe loaded in the page may not (start lampwright serve with the file instead)");
        if (const auto* pump = root.get_as<toml::table>("pump"); pump && pump->contains("spectrum"))
            doc.fail(pump->get("spectrum"), "pump.spectrum",
                     "names a file on disk, which a design loaded in the page may not (start lampwright serve with the file instead)");
        if (is_layer_design(doc)) {
            LayerDesign d = layer_design_from_toml(doc, config.phosphor_folders);
            std::lock_guard lock(state_mutex);
            layer = std::move(d);
            notes.clear();
        } else {
            Recipe r = recipe_from_toml(doc, config.phosphor_folders);
            std::lock_guard lock(state_mutex);
            layer.reset();
            base = r.blend;
            notes = r.notes;
        }
        return recipe_json();
    }

    template <class Work>
    void answer(httplib::Response& res, Work&& work) {
        try {
            res.set_content(dump_json(work(), -1), kJson);
            res.status = 200;
        } catch (const ApiError& e) {
            res.status = e.status;
            res.set_content(dump_json(error_json(e.message), -1), kJson);
        } catch (const InputError& e) {
            res.status = 422;
            res.set_content(dump_json(input_error_json(e), -1), kJson);
        } catch (const json::parse_error& e) {
            res.status = 400;
            res.set_content(dump_json(error_json(std::string("the request is not valid JSON: ") + e.what()), -1), kJson);
        } catch (const std::exception& e) {
            res.status = 422;
            res.set_content(dump_json(error_json(e.what()), -1), kJson);
        }
    }

    static json body_json(const httplib::Request& req) {
        // Parsed into a plain json; objects keep insertion order only where the answer needs it.
        return json::parse(req.body);
    }

    void routes() {
        http.set_payload_max_length(config.max_body_bytes);
        // Answers go out at once: with Nagle's algorithm a small answer waits for the peer's
        // delayed ACK (tens of ms, RFC 1122 4.2.3.2), longer than the whole evaluation.
        http.set_tcp_nodelay(true);
        http.set_pre_routing_handler([this](const httplib::Request& req, httplib::Response& res) {
            auto refuse = [&](int status, const std::string& message) {
                res.status = status;
                res.set_content(dump_json(error_json(message), -1), kJson);
                return httplib::Server::HandlerResponse::Handled;
            };
            const std::string host = req.get_header_value("Host");
            if (!host_allowed(host))
                return refuse(403, fmt::format("Host '{}' refused: this server answers to http://{}:{}/ only", host, config.host, bound_port));
            if (req.has_header("Origin")) {
                const std::string origin = req.get_header_value("Origin");
                if (!host_allowed(origin.rfind("http://", 0) == 0 ? origin.substr(7) : std::string()))
                    return refuse(403, fmt::format("Origin '{}' refused", origin));
            }
            if (!rate_ok()) return refuse(429, "too many requests; slow down");
            // Every answer: no caching, no sniffing, nothing from anywhere but this server.
            res.set_header("Cache-Control", "no-store");
            res.set_header("X-Content-Type-Options", "nosniff");
            res.set_header("Content-Security-Policy",
                           "default-src 'self'; script-src 'self'; style-src 'self' 'unsafe-inline'; img-src 'self' data:; connect-src 'self'; "
                           "frame-ancestors 'none'; form-action 'none'");
            return httplib::Server::HandlerResponse::Unhandled;
        });
        auto file = [](const char* name, const char* type) {
            return [name, type](const httplib::Request&, httplib::Response& res) {
                const EmbeddedFile* f = asset(name);
                if (!f) {
                    res.status = 404;
                    return;
                }
                res.set_content(std::string(f->content), type);
            };
        };
        http.Get("/", file("index.html", "text/html; charset=utf-8"));
        http.Get("/app.js", file("app.js", "text/javascript; charset=utf-8"));
        http.Get("/app.css", file("app.css", "text/css; charset=utf-8"));
        http.Get("/api/state", [this](const httplib::Request&, httplib::Response& res) { answer(res, [&] { return state(); }); });
        http.Post("/api/evaluate", [this](const httplib::Request& req, httplib::Response& res) { answer(res, [&] { return evaluate(body_json(req)); }); });
        http.Post("/api/fit", [this](const httplib::Request& req, httplib::Response& res) { answer(res, [&] { return start_fit(body_json(req)); }); });
        http.Get(R"(/api/fit/(\d{1,9}))", [this](const httplib::Request& req, httplib::Response& res) {
            answer(res, [&] { return fit_status(req.matches[1]); });
        });
        http.Post(R"(/api/fit/(\d{1,9})/cancel)", [this](const httplib::Request& req, httplib::Response& res) {
            answer(res, [&] { return cancel_fit(req.matches[1]); });
        });
        http.Post("/api/recipe/export", [this](const httplib::Request& req, httplib::Response& res) {
            answer(res, [&] { return export_recipe(body_json(req)); });
        });
        http.Post("/api/recipe/load", [this](const httplib::Request& req, httplib::Response& res) {
            answer(res, [&] { return load_recipe_text(body_json(req)); });
        });
    }
};

Server::Server(ServerConfig config) : impl_(std::make_unique<Impl>(std::move(config))) { impl_->routes(); }

Server::~Server() { stop(); }

int Server::bind() {
    auto& i = *impl_;
    if (i.config.port == 0) {
        i.bound_port = i.http.bind_to_any_port(i.config.host);
        if (i.bound_port < 0) throw Error(fmt::format("cannot listen on {} (any port)", i.config.host));
    } else {
        if (!i.http.bind_to_port(i.config.host, i.config.port))
            throw Error(fmt::format("cannot listen on {}:{} (in use, or not an address of this machine)", i.config.host, i.config.port));
        i.bound_port = i.config.port;
    }
    return i.bound_port;
}

void Server::run() {
    auto& i = *impl_;
    i.run_entered = true;
    if (!i.stopping) i.http.listen_after_bind();
    i.run_finished = true;
}

void Server::stop() {
    if (!impl_) return;
    auto& i = *impl_;
    i.stopping = true;
    // Wait (at most 2 s) for a run() already entered to be listening, so that stop() reaches it.
    for (int k = 0; k < 2000 && i.run_entered && !i.run_finished && !i.http.is_running(); ++k)
        std::this_thread::sleep_for(std::chrono::milliseconds(1));
    i.http.stop();
}

bool Server::running() const { return impl_->http.is_running(); }

int Server::port() const { return impl_->bound_port; }

}  // namespace lampwright::serve
