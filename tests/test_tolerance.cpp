// Tests of the production-tolerance Monte Carlo (src/lampwright/design/tolerance.hpp) and its fit
// command-line options.
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/core/statistics.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/design/targets.hpp"
#include "lampwright/design/tolerance.hpp"
#include "lampwright/report/fit_report.hpp"
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "test_support.hpp"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <numbers>
#include <sstream>
#include <string>
#include <vector>

using namespace lampwright;

namespace {

using lwtest::example_recipe;
using lwtest::quote;
using lwtest::run_cli;

// A production problem on a shipped recipe, the ellipse centred on its nominal chromaticity.
ToleranceProblem production(const std::string& recipe, std::size_t draws) {
    ToleranceProblem t;
    t.blend = load_recipe(example_recipe(recipe)).blend;
    const Chromaticity xy = evaluate_blend(t.blend).assessment.xy;
    t.ellipse = tolerance_ellipse(target_xy(xy.x, xy.y));
    t.steps = 4;
    t.weighing_sigma = {0.01};
    t.peak_sigma_nm = {0.5};
    t.qe_sigma = {0.01};
    t.draws = draws;
    t.seed = 7;
    return t;
}

}  // namespace

TEST_CASE("tolerance: the fast path agrees with evaluate_blend on shifted phosphors") {
    // The fast path is exact up to the interpolation of the tabulated shifts (linearity of X, Y, Z
    // in the photon shares, README "Blend physics"); the reference is the full blend model on
    // phosphors moved by shifted_phosphor. Common practice, no source.
    for (const char* recipe : {"led395_module.toml", "multiband_5000K.toml", "triband_4000K.toml"}) {
        CAPTURE(recipe);
        ToleranceProblem t = production(recipe, 10);
        t.weighing_sigma = {0.02};
        t.peak_sigma_nm = {1.5};  // large shifts, so the interpolation is exercised
        t.qe_sigma = {0.03};
        const ToleranceModel m(t);
        ToleranceSampler s(m, 3);
        ToleranceDraw d;
        for (int k = 0; k < 5; ++k) {
            s.next(d);
            const Chromaticity fast = m.chromaticity(d);
            const BlendResult exact = evaluate_draw_exactly(t.blend, d);
            // The fast path keeps the coating optics of the nominal fractions (blend_basis: the 365 nm
            // line's escape depends on the coating's make-up); the exact path recomputes them at the
            // drawn fractions. That moves x, y by a few 1e-6, far below a MacAdam step (next check).
            CHECK(fast.x == doctest::Approx(exact.assessment.xy.x).epsilon(1e-5));
            CHECK(fast.y == doctest::Approx(exact.assessment.xy.y).epsilon(1e-5));
            CHECK(std::abs(macadam_steps(t.ellipse, fast) - macadam_steps(t.ellipse, exact.assessment.xy)) < 0.002);
        }
    }
}

TEST_CASE("tolerance: a shifted phosphor moves its emission by the shift") {
    // Definition of the shift (thermal model of phosphor.hpp uses the same); common practice, no source.
    const Phosphor& p = PhosphorLibrary::builtin().find("beta-SiAlON:Eu2+");
    const Spectrum a = emission_photons(p), b = emission_photons(shifted_phosphor(p, 3.0));
    double ca = 0, cb = 0;
    for (std::size_t i = 0; i < a.values.size(); ++i) {
        ca += a.values[i] * (a.first_nm + static_cast<double>(i));
        cb += b.values[i] * (b.first_nm + static_cast<double>(i));
    }
    CHECK(cb - ca == doctest::Approx(3.0).epsilon(0.05));
    // A measured spectrum: shifted by interpolation.
    Phosphor m = p;
    m.emission_model = "measured";
    m.measured_power = Spectrum{"m", 500, std::vector<double>(101, 0.0)};
    m.measured_power.values[50] = 1.0;  // a line at 550 nm
    const Phosphor ms = shifted_phosphor(m, 2.5);
    CHECK(ms.measured_power.values[52] == doctest::Approx(0.5));
    CHECK(ms.measured_power.values[53] == doctest::Approx(0.5));
}

TEST_CASE("tolerance: yield matches the analytic case of one component with Gaussian weighing error") {
    // Two components (Y2O3:Eu3+ and LaPO4:Ce3+,Tb3+), only the first weighed with a relative error
    // delta ~ N(0, sigma): w1' = w1 (1 + delta), w2' = w2, renormalised. The chromaticity moves
    // along the line between the two components; to first order c(delta) = c0 + c'(0) delta, and
    // the MacAdam distance from c0 is sqrt(dc^T G dc) = k |delta| with k = sqrt(c'^T G c'). So the
    // steps are a |Gaussian| scaled by k sigma, and the share inside n steps is
    //     P(k sigma |z| <= n) = erf(n / (k sigma sqrt 2)),  z ~ N(0, 1).
    // k is computed here by a central difference on evaluate_blend (|steps| is symmetric to first
    // order, so k = (steps(+h) + steps(-h)) / (2h)). The second-order terms change the share by
    // O((n/k)^2), about 1e-4 here, well below the standard error. Derivation: common practice,
    // no source.
    const BlendInput tri = load_recipe(example_recipe("triband_4000K.toml")).blend;
    ToleranceProblem t;
    t.blend = tri;
    t.blend.components = {tri.components[0], tri.components[1]};
    t.blend.components[0].mass_fraction = 0.5;
    t.blend.components[1].mass_fraction = 0.5;
    const Chromaticity c0 = evaluate_blend(t.blend).assessment.xy;
    t.ellipse = tolerance_ellipse(target_xy(c0.x, c0.y));
    t.steps = 4;
    auto steps_at = [&](double delta) {
        BlendInput b = t.blend;
        b.components[0].mass_fraction *= 1 + delta;
        return macadam_steps(t.ellipse, evaluate_blend(b).assessment.xy);
    };
    const double h = 1e-4;
    const double k = (steps_at(h) + steps_at(-h)) / (2 * h);
    const double sigma = t.steps / (1.5 * k);  // n / (k sigma) = 1.5: the analytic share is erf(1.5 / sqrt 2) = 0.866
    t.weighing_sigma = {sigma, 0.0};
    t.draws = 100000;
    t.seed = 11;
    const ToleranceResult r = run_tolerance(t);
    const double analytic = std::erf(t.steps / (k * sigma * std::sqrt(2.0)));
    MESSAGE("k = " << k << " steps per unit relative error, sigma = " << sigma << "; Monte Carlo " << r.yield << " +- "
                   << r.yield_standard_error << ", analytic " << analytic);
    CHECK(r.yield_standard_error == doctest::Approx(std::sqrt(r.yield * (1 - r.yield) / 1e5)));
    CHECK(std::abs(r.yield - analytic) < 3 * r.yield_standard_error);
    // The mean of k sigma |z| is k sigma sqrt(2 / pi); its sd k sigma sqrt(1 - 2 / pi).
    CHECK(r.mean_steps == doctest::Approx(k * sigma * std::sqrt(2 / std::numbers::pi)).epsilon(0.01));
    CHECK(r.sd_steps == doctest::Approx(k * sigma * std::sqrt(1 - 2 / std::numbers::pi)).epsilon(0.02));
    // Median of |z|: 0.6745 (the normal quartile).
    CHECK(r.p50 == doctest::Approx(0.6745 * k * sigma).epsilon(0.02));
    CHECK(r.nominal_steps < 1e-9);
}

TEST_CASE("tolerance: the yield converges and its standard error shrinks as 1 over sqrt(N)") {
    // Binomial standard error sqrt(p (1 - p) / N) (common practice, no source).
    std::vector<ToleranceResult> runs;
    for (std::size_t n : {2000u, 8000u, 32000u, 128000u}) {
        ToleranceProblem t = production("led395_module.toml", n);
        t.steps = 2;  // a yield well inside (0, 1), so the standard error is informative
        runs.push_back(run_tolerance(t));
    }
    for (std::size_t i = 0; i + 1 < runs.size(); ++i) {
        const double ratio = runs[i].yield_standard_error / runs[i + 1].yield_standard_error;
        CAPTURE(i);
        CHECK(ratio == doctest::Approx(2.0).epsilon(0.15));
        CHECK(std::abs(runs[i].yield - runs.back().yield) < 4 * runs[i].yield_standard_error);
    }
    CHECK(runs.back().yield > 0.2);
    CHECK(runs.back().yield < 0.98);
    MESSAGE("yield " << runs.back().yield << " +- " << runs.back().yield_standard_error << " at 128000 draws");
}

TEST_CASE("tolerance: same seed gives the same result, and progress is reported") {
    // Determinism of std::mt19937_64 (fixed by the C++ standard) with one standard library's
    // normal_distribution (common practice, no source).
    const ToleranceProblem t = production("multiband_5000K.toml", 5000);
    std::vector<std::size_t> seen;
    const ToleranceResult a = run_tolerance(t, [&](std::size_t done, std::size_t total) {
        CHECK(total == 5000);
        seen.push_back(done);
    }, true);
    const ToleranceResult b = run_tolerance(t, {}, true);
    CHECK(a.steps == b.steps);
    CHECK(a.yield == b.yield);
    CHECK(a.mean_steps == b.mean_steps);
    REQUIRE_FALSE(seen.empty());
    CHECK(seen.back() == 5000);
    CHECK(std::is_sorted(seen.begin(), seen.end()));
    ToleranceProblem other = t;
    other.seed = 8;
    CHECK(run_tolerance(other).mean_steps != a.mean_steps);
    // Percentiles are ordered.
    CHECK(a.p50 <= a.p90);
    CHECK(a.p90 <= a.p95);
    CHECK(a.p95 <= a.p99);
    CHECK(a.p99 <= a.max_steps);
}

TEST_CASE("tolerance: absolute weighing error equals the relative one scaled by the fraction") {
    // m = w + s z = w (1 + (s / w) z): with the same seed (same z) both modes give the same lamps
    // (algebra, common practice, no source).
    ToleranceProblem rel = production("triband_4000K.toml", 3000);
    rel.peak_sigma_nm = {0.0};
    rel.qe_sigma = {0.0};
    ToleranceProblem abs = rel;
    abs.weighing_relative = false;
    double total = 0;
    for (const auto& c : rel.blend.components) total += c.mass_fraction;
    rel.weighing_sigma.clear();
    abs.weighing_sigma.clear();
    for (const auto& c : rel.blend.components) {
        abs.weighing_sigma.push_back(0.004);
        rel.weighing_sigma.push_back(0.004 / (c.mass_fraction / total));
    }
    const ToleranceResult a = run_tolerance(rel, {}, true), b = run_tolerance(abs, {}, true);
    REQUIRE(a.steps.size() == b.steps.size());
    for (std::size_t i = 0; i < a.steps.size(); i += 100) CHECK(a.steps[i] == doctest::Approx(b.steps[i]).epsilon(1e-9));
    CHECK(a.yield == b.yield);
}

TEST_CASE("tolerance: bad problems are errors") {
    // Input checks (common practice, no source).
    ToleranceProblem t = production("triband_4000K.toml", 100);
    t.weighing_sigma = {-0.01};
    CHECK_THROWS_AS(run_tolerance(t), Error);
    t.weighing_sigma = {0.01, 0.01};  // three components
    CHECK_THROWS_AS(run_tolerance(t), Error);
    t.weighing_sigma = {0.01};
    t.draws = 0;
    CHECK_THROWS_AS(run_tolerance(t), Error);
}

TEST_CASE("tolerance: draws with no finite chromaticity are counted as failed, never averaged or sorted") {
    // A QE sigma of 5 (a percentage typed as a fraction, which the command line refuses) draws
    // QE factors at zero for every phosphor of some lamps: no light, x and y are 0/0. Those lamps
    // are failed: outside the ellipse, counted, and left out of the means and percentiles.
    ToleranceProblem t = production("triband_4000K.toml", 4000);
    t.weighing_sigma = {0.0};
    t.peak_sigma_nm = {0.0};
    t.qe_sigma = {5.0};
    // No light has no distance from the target (not 0 steps, which would count it inside).
    CHECK(std::isnan(macadam_steps(t.ellipse, Chromaticity{std::nan(""), std::nan("")})));
    const ToleranceResult r = run_tolerance(t, {}, true);
    REQUIRE(r.steps.size() == 4000);
    std::vector<double> finite;
    std::size_t not_finite = 0;
    for (double s : r.steps) {
        if (std::isfinite(s)) finite.push_back(s);
        else ++not_finite;
    }
    MESSAGE(r.failed << " of " << r.draws << " draws failed");
    CHECK(r.failed > 0);
    CHECK(r.failed == not_finite);
    CHECK(finite.size() + r.failed == r.draws);
    for (double v : {r.mean_steps, r.sd_steps, r.p50, r.p90, r.p95, r.p99, r.max_steps, r.mean_x, r.mean_y, r.sd_x, r.sd_y, r.corr_xy})
        CHECK(std::isfinite(v));
    double sum = 0;
    for (double s : finite) sum += s;
    CHECK(r.mean_steps == doctest::Approx(sum / static_cast<double>(finite.size())).epsilon(1e-9));
    std::sort(finite.begin(), finite.end());
    CHECK(r.max_steps == finite.back());
    CHECK(r.p50 == doctest::Approx(quantile_sorted(finite, 0.5)));
    // The yield is over every lamp made: a failed lamp is not inside.
    const auto inside = static_cast<std::size_t>(std::count_if(finite.begin(), finite.end(), [&](double s) { return s <= t.steps; }));
    CHECK(r.inside == inside);
    CHECK(r.yield == doctest::Approx(static_cast<double>(inside) / 4000.0));
    // The reports say how many lamps failed (text, JSON and the fit's CSV columns).
    CHECK(tolerance_text(t, r, 1.0, "test").find(fmt::format("failed:     {} draws gave no light", r.failed)) != std::string::npos);
    CHECK(tolerance_json(t, r, 1.0, "test")["failed"] == r.failed);
}

TEST_CASE("fit command: tolerance run, reproducible, and its usage errors") {
    // The CLI contract: exit 0, the same numbers for the same seed, exit 2 for usage errors
    // (common practice, no source).
    const std::string recipe = quote(example_recipe("triband_4000K.toml"));
    auto run_json = [&]() {
        const auto r = run_cli("fit " + recipe +
                               " --cct 4000 --tolerance-run --draws 20000 --weighing-sigma 0.005 --peak-sigma 0.5 --qe-sigma 0.01 --seed 1 "
                               "--format json");
        REQUIRE(r.exit_code == 0);
        return r.out;
    };
    const std::string a = run_json(), b = run_json();
    const auto pos = a.find("\"tolerance\"");
    REQUIRE(pos != std::string::npos);
    // Everything but the timing is identical.
    auto strip_time = [](std::string s) {
        std::string out;
        std::istringstream in(s);
        std::string line;
        while (std::getline(in, line))
            if (line.find("time_ms") == std::string::npos) out += line + "\n";
        return out;
    };
    CHECK(strip_time(a) == strip_time(b));
    CHECK(a.find("\"inside_share\"") != std::string::npos);
    // The Rf/Rg spread (docs/output-schemas.md): 2000 draws, 5th percentile <= mean <= 95th (definitions).
    const auto tj = nlohmann::json::parse(a).at("tolerance");
    CHECK(tj.at("fidelity_draws") == 2000);
    for (const char* k : {"Rf", "Rg"}) {
        CAPTURE(k);
        CHECK(tj.at(k).at("p05").get<double>() <= tj.at(k).at("mean").get<double>());
        CHECK(tj.at(k).at("mean").get<double>() <= tj.at(k).at("p95").get<double>());
    }
    // The CSV row carries the same figures in its tol_ columns.
    const auto csv = run_cli("fit " + recipe + " --cct 4000 --tolerance-run --draws 3000 --peak-sigma 0.5 --seed 1 --format csv");
    REQUIRE(csv.exit_code == 0);
    const auto js = run_cli("fit " + recipe + " --cct 4000 --tolerance-run --draws 3000 --peak-sigma 0.5 --seed 1 --format json");
    REQUIRE(js.exit_code == 0);
    const auto tj3 = nlohmann::json::parse(js.out).at("tolerance");
    std::istringstream lines(csv.out);
    std::string head, row;
    std::getline(lines, head);
    std::getline(lines, row);
    const auto h = lwtest::csv_cells(head), v = lwtest::csv_cells(row);
    REQUIRE(h.size() == v.size());
    auto cell = [&](const std::string& name) {
        const auto it = std::find(h.begin(), h.end(), name);
        REQUIRE(it != h.end());
        return v[static_cast<std::size_t>(it - h.begin())];
    };
    CHECK(std::stod(cell("tol_mean_Rf")) == doctest::Approx(tj3.at("Rf").at("mean").get<double>()).epsilon(1e-5));
    CHECK(std::stod(cell("tol_sd_Rg")) == doctest::Approx(tj3.at("Rg").at("sd").get<double>()).epsilon(1e-5));
    CHECK(cell("tol_fidelity_draws") == "2000");

    auto rc = [&](const std::string& args) { return run_cli("fit " + recipe + " --cct 4000 " + args).exit_code; };
    CHECK(rc("--draws 100") == 2);
    CHECK(rc("--tolerance-run --weighing-sigma 0.01 --draws 0") == 2);
    CHECK(rc("--tolerance-run --weighing-sigma -0.01") == 2);
    CHECK(rc("--tolerance-run --weighing-sigma 0.01,0.01") == 2);
    CHECK(rc("--tolerance-run --peak-sigma abc") == 2);
    CHECK(rc("--tolerance-run --weighing-sigma 0.01 --steps 0") == 2);
    // Every sigma has a default (kToleranceSources): the run needs no option; all set to zero, nothing to draw.
    CHECK(rc("--tolerance-run --draws 1000") == 0);
    CHECK(rc("--tolerance-run --weighing-sigma 0 --peak-sigma 0 --qe-sigma 0 --d50-sigma 0 --absorption-sigma 0 --coating-weight-sigma 0 "
             "--measurement-sigma 0") == 2);
    CHECK(rc("--tolerance-run --batch-size 0") == 2);
    CHECK(rc("--tolerance-run --batch-size 2.5") == 2);
    CHECK(rc("--tolerance-run --d50-sigma 0.01,0.01") == 2);
    CHECK(rc("--tolerance-run --draws 1000 --weighing-sigma 0.01,0.02,0.005 --steps 2") == 0);
}

namespace {

// Only the named sources of variation, every other sigma zero.
ToleranceProblem only(const std::string& recipe, std::size_t batch_size, std::size_t draws) {
    ToleranceProblem t = production(recipe, draws);
    t.weighing_sigma.clear();
    t.peak_sigma_nm.clear();
    t.qe_sigma.clear();
    t.batch_size = batch_size;
    return t;
}

std::string triband_with(const std::string& tolerance_table) {
    return lwtest::slurp(example_recipe("triband_4000K.toml")) + "\n[tolerance]\n" + tolerance_table;
}

}  // namespace

TEST_CASE("tolerance: the fast path agrees with evaluate_blend with d50, absorption and coating weight drawn") {
    // As the first check, with the new per-batch terms and the per-lamp coating weight. The fast path
    // keeps the coating optics of the nominal fractions and grain sizes (tolerance.hpp); the exact
    // path recomputes them for the drawn d50, so the agreement is looser than for the shifts alone:
    // well below a tenth of a MacAdam step. Common practice, no source.
    ToleranceProblem t = production("triband_4000K.toml", 10);
    t.d50_sigma = {0.08};
    t.absorption_sigma = {0.04};
    t.coating_weight_sigma_mg_per_cm2 = 0.4;
    const ToleranceModel m(t);
    REQUIRE(m.nominal_coating_weight() > 0);
    ToleranceSampler s(m, 5);
    ToleranceDraw d;
    for (int k = 0; k < 5; ++k) {
        s.next(d);
        CAPTURE(d.coating_weight_mg_per_cm2);
        const Chromaticity fast = m.chromaticity(d);
        const Chromaticity exact = measured(evaluate_draw_exactly(t.blend, d).assessment.xy, d);
        CHECK(std::abs(macadam_steps(t.ellipse, fast) - macadam_steps(t.ellipse, exact)) < 0.05);
    }
    // The coating weight alone moves the colour through the line fraction, as the coating model
    // does: a lamp at nominal + 1 mg/cm2 by both paths.
    ToleranceDraw heavy = m.nominal_draw();
    heavy.coating_weight_mg_per_cm2 = m.nominal_coating_weight() + 1.0;
    const Chromaticity f = m.chromaticity(heavy), e = evaluate_draw_exactly(t.blend, heavy).assessment.xy;
    CHECK(f.x == doctest::Approx(e.x).epsilon(1e-4));
    CHECK(f.y == doctest::Approx(e.y).epsilon(1e-4));
    CHECK(std::abs(f.x - m.chromaticity(m.nominal_draw()).x) > 1e-5);
}

TEST_CASE("tolerance: with only per-batch terms all the spread is between batches") {
    // Lamps of a batch share its powder mix and lots, so with no per-lamp term they are identical:
    // the within-batch variance is 0 and the batch means carry the whole variance; over N lamps in
    // B batches of n, var_total = n (B - 1) / (N - 1) var_between (one-way analysis of variance,
    // a property of the design; common practice, no source).
    ToleranceProblem t = only("triband_4000K.toml", 20, 2000);
    t.weighing_sigma = {0.01};
    t.d50_sigma = {0.05};
    t.absorption_sigma = {0.02};
    t.qe_sigma = {0.02};
    t.peak_sigma_nm = {0.5};
    const ToleranceResult r = run_tolerance(t, {}, true);
    CHECK(r.batches == 100);
    CHECK(r.sd_x_within < 1e-12);
    CHECK(r.sd_y_within < 1e-12);
    CHECK(r.within_steps_rms < 1e-9);
    const double factor = 20.0 * 99.0 / 1999.0;
    CHECK(r.sd_x * r.sd_x == doctest::Approx(factor * r.sd_x_between * r.sd_x_between).epsilon(1e-9));
    CHECK(r.sd_y * r.sd_y == doctest::Approx(factor * r.sd_y_between * r.sd_y_between).epsilon(1e-9));
    CHECK(r.sd_x > 1e-4);
    for (std::size_t k = 1; k < 20; ++k) CHECK(r.xy[k].x == r.xy[0].x);
    CHECK(r.xy[20].x != r.xy[0].x);
}

TEST_CASE("tolerance: with only per-lamp terms batch means vary by the total over the batch size") {
    // Independent lamps: the mean of n has variance var / n (common practice, no source). 200
    // batches: the variance estimate has a relative sd of sqrt(2 / 199) = 0.10; the check allows 3.
    ToleranceProblem t = only("triband_4000K.toml", 25, 5000);
    t.measurement_sigma_xy = 0.0015;  // the default, from memory
    const ToleranceResult r = run_tolerance(t);
    // Measurement alone: x and y scatter by the sigma itself (1 % sd of the estimate at N = 5000).
    CHECK(r.sd_x == doctest::Approx(0.0015).epsilon(0.04));
    CHECK(r.sd_y == doctest::Approx(0.0015).epsilon(0.04));
    CHECK(r.sd_x_between * r.sd_x_between == doctest::Approx(r.sd_x * r.sd_x / 25).epsilon(0.3));
    CHECK(r.sd_y_between * r.sd_y_between == doctest::Approx(r.sd_y * r.sd_y / 25).epsilon(0.3));
    CHECK(r.sd_x_within == doctest::Approx(r.sd_x).epsilon(0.03));
    // The coating weight is per lamp too.
    ToleranceProblem c = only("triband_4000K.toml", 25, 5000);
    c.coating_weight_sigma_mg_per_cm2 = 0.3;
    const ToleranceResult rc = run_tolerance(c);
    REQUIRE(rc.sd_x > 0);
    CHECK(rc.sd_x_between * rc.sd_x_between == doctest::Approx(rc.sd_x * rc.sd_x / 25).epsilon(0.3));
    MESSAGE("coating 0.3 mg/cm2: sd x " << rc.sd_x << ", sd y " << rc.sd_y);
}

TEST_CASE("tolerance: line emitters never shift, band emitters do") {
    // 4f-4f lines of Eu3+ and Tb3+ barely move between lots (data/phosphors, from memory); a
    // component with emission model "lines" is never shifted. BaMgAl10O17:Eu2+ is a band emitter.
    ToleranceProblem t = only("triband_4000K.toml", 1, 50);
    t.peak_sigma_nm = {2.0};
    REQUIRE(t.blend.components[0].phosphor.emission_model == "lines");  // Y2O3:Eu3+
    REQUIRE(t.blend.components[1].phosphor.emission_model == "lines");  // LaPO4:Ce3+,Tb3+
    REQUIRE(t.blend.components[2].phosphor.emission_model == "bands");  // BaMgAl10O17:Eu2+
    const ToleranceModel m(t);
    ToleranceSampler s(m, 2);
    ToleranceDraw d;
    int moved = 0;
    for (int k = 0; k < 50; ++k) {
        s.next(d);
        CHECK(d.shift_nm[0] == 0.0);
        CHECK(d.shift_nm[1] == 0.0);
        moved += d.shift_nm[2] != 0.0;
    }
    CHECK(moved == 50);
    REQUIRE_FALSE(m.notes().empty());
    CHECK(m.notes().front().find("Y2O3:Eu3+") != std::string::npos);
}

TEST_CASE("tolerance: the batch-aware standard error of the yield") {
    // With whole batches in or out, the lamps of a batch count once: the standard error is that of
    // B batch shares (cluster sampling; Cochran 1977, Sampling Techniques, ch. 6, from memory),
    // larger than the binomial sqrt(p (1 - p) / N) by about sqrt(n) when all the spread is per batch.
    ToleranceProblem t = only("triband_4000K.toml", 16, 16000);
    t.weighing_sigma = {0.03};
    t.steps = 2;
    const ToleranceResult r = run_tolerance(t);
    REQUIRE(r.yield > 0.1);
    REQUIRE(r.yield < 0.9);
    const double binomial = std::sqrt(r.yield * (1 - r.yield) / 16000.0);
    CHECK(r.yield_standard_error / binomial == doctest::Approx(4.0).epsilon(0.01));
}

TEST_CASE("fit command: a recipe's [tolerance] is used and said so; options override it") {
    // The CLI contract of the recipe table (common practice, no source).
    const lwtest::TempDir dir;
    const std::string recipe = dir.write("tri.toml", triband_with("d50_sigma = 0.08\nbatch_size = 10\nmeasurement_sigma_xy = 0.002\n"));
    auto json = [&](const std::string& extra) {
        const auto r = run_cli("fit " + quote(recipe) + " --cct 4000 --tolerance-run --draws 200 --format json " + extra);
        REQUIRE(r.exit_code == 0);
        return nlohmann::json::parse(r.out)["tolerance"];
    };
    const auto a = json("");
    CHECK(a["d50_sigma"][0] == 0.08);
    CHECK(a["batch_size"] == 10);
    CHECK(a["batches"] == 20);
    CHECK(a["measurement_sigma_xy"] == 0.002);
    CHECK(a["sources"]["d50_sigma"].get<std::string>().find("recipe") != std::string::npos);
    CHECK(a["sources"]["weighing_sigma"].get<std::string>().find("default") != std::string::npos);
    CHECK(a["weighing_sigma"][0] == tolerance_source("weighing_sigma").default_value);
    const auto b = json("--batch-size 5 --d50-sigma 0.01");
    CHECK(b["batch_size"] == 5);
    CHECK(b["d50_sigma"][0] == 0.01);
    CHECK(b["sources"]["batch_size"] == "--batch-size");
    // The text output names the origin of each sigma.
    const auto t = run_cli("fit " + quote(recipe) + " --cct 4000 --tolerance-run --draws 200");
    REQUIRE(t.exit_code == 0);
    CHECK(t.out.find("lot d50              batch  sigma 8 %  [the recipe's [tolerance]") != std::string::npos);
}

TEST_CASE("fit command: a bad [tolerance] is refused with file, line and key") {
    // Input errors name the file, the line and the key (project rule; common practice, no source).
    const lwtest::TempDir dir;
    const std::string base = lwtest::slurp(example_recipe("triband_4000K.toml"));
    const int base_lines = static_cast<int>(std::count(base.begin(), base.end(), '\n'));
    struct Case {
        std::string table, key;
    };
    for (const Case& c : {Case{"weighing_sigma = 0.001\nd50_sigma = 0.9\n", "tolerance.d50_sigma"},
                          Case{"weighing_sigma = 0.001\nbatch_size = 2.5\n", "tolerance.batch_size"},
                          Case{"weighing_sigma = 0.001\nd50_sgima = 0.05\n", "d50_sgima"},
                          Case{"weighing_sigma = 0.001\nqe_sigma = [0.01, 0.02]\n", "tolerance.qe_sigma"},
                          Case{"weighing_sigma = 0.001\nmeasurement_sigma_xy = [0.001, 0.001, 0.001]\n", "tolerance.measurement_sigma_xy"},
                          Case{"weighing_sigma = 0.001\ncoating_weight_sigma_mg_per_cm2 = -0.1\n", "tolerance.coating_weight_sigma_mg_per_cm2"}}) {
        CAPTURE(c.table);
        const std::string recipe = dir.write("bad.toml", triband_with(c.table));
        const auto r = run_cli("fit " + quote(recipe) + " --cct 4000 --tolerance-run --draws 100");
        CHECK(r.exit_code != 0);
        CHECK(r.err.find("bad.toml") != std::string::npos);
        // The offending key is the table's second: after the recipe's lines, an empty one, "[tolerance]" and the first key.
        CHECK(r.err.find(fmt::format("bad.toml:{}:", base_lines + 4)) != std::string::npos);
        CHECK(r.err.find(c.key) != std::string::npos);
        CHECK(r.out.empty());
        // Checked when the recipe is loaded, by any command.
        const auto b = run_cli("blend " + quote(recipe));
        CHECK(b.exit_code != 0);
        CHECK(b.err.find(c.key) != std::string::npos);
    }
}

TEST_CASE("tolerance: Rf and Rg of a draw by the fast path agree with evaluate_blend; the run reports their spread") {
    // The CIE 224 sample sums are linear in the light as X, Y, Z are (CIE 224:2017, 4.2), so the
    // same tabulated shifts and coating-weight table carry them; the reference is the full blend
    // model's assess() on the drawn lamp (common practice, no source; the tolerance is that of the
    // coating optics, as in the chromaticity checks above).
    for (const char* recipe : {"led395_module.toml", "multiband_5000K.toml", "triband_4000K.toml"}) {
        CAPTURE(recipe);
        ToleranceProblem t = production(recipe, 10);
        t.peak_sigma_nm = {1.5};
        t.qe_sigma = {0.03};
        t.d50_sigma = {0.05};
        t.coating_weight_sigma_mg_per_cm2 = 0.3;
        const ToleranceModel m(t, true);
        REQUIRE(m.has_fidelity());
        ToleranceSampler s(m, 3);
        ToleranceDraw d;
        for (int k = 0; k < 3; ++k) {
            s.next(d);
            const auto fast = m.fidelity(d);
            const BlendResult exact = evaluate_draw_exactly(t.blend, d);
            REQUIRE(fast);
            REQUIRE(exact.assessment.fidelity);
            CHECK(std::abs(fast->rf - exact.assessment.fidelity->rf) < 0.05);
            CHECK(std::abs(fast->rg - exact.assessment.fidelity->rg) < 0.05);
        }
    }
    // No errors at all: every draw is the recipe, so the spread is nil and the mean is the
    // recipe's own Rf, Rg (definitions of mean and sd).
    ToleranceProblem zero = production("triband_4000K.toml", 300);
    zero.weighing_sigma = {0};
    zero.peak_sigma_nm = {0};
    zero.qe_sigma = {0};
    zero.measurement_sigma_xy = 0.001;  // a chromaticity error only: it must not spread Rf
    zero.fidelity_draws = 50;
    const ToleranceResult z = run_tolerance(zero);
    const BlendResult nominal_blend = evaluate_blend(zero.blend);
    REQUIRE(nominal_blend.assessment.fidelity);
    const ColourFidelity nominal = *nominal_blend.assessment.fidelity;
    CHECK(z.fidelity_draws == 50);
    CHECK(z.rf.mean == doctest::Approx(nominal.rf).epsilon(1e-4));
    CHECK(z.rg.mean == doctest::Approx(nominal.rg).epsilon(1e-4));
    CHECK(z.rf.sd < 1e-9);
    CHECK(z.nominal_rf == doctest::Approx(nominal.rf).epsilon(1e-4));
    // With errors: the percentiles bracket the mean, and a larger peak shift spreads Rf more
    // (Rf falls as the bands move from where the recipe put them; common practice, no source).
    ToleranceProblem some = production("multiband_5000K.toml", 400);
    some.fidelity_draws = 400;
    const ToleranceResult a = run_tolerance(some);
    some.peak_sigma_nm = {2.0};
    const ToleranceResult b = run_tolerance(some);
    CHECK(a.fidelity_draws == 400);
    CHECK(a.rf.p05 <= a.rf.mean);
    CHECK(a.rf.mean <= a.rf.p95);
    CHECK(a.rg.p05 <= a.rg.mean);
    CHECK(a.rg.mean <= a.rg.p95);
    CHECK(a.rf.sd > 0);
    CHECK(b.rf.sd > a.rf.sd);
    // Only the first fidelity_draws draws, and none at 0: the chromaticity figures do not change.
    some.peak_sigma_nm = {0.5};
    some.fidelity_draws = 10;
    const ToleranceResult c = run_tolerance(some);
    some.fidelity_draws = 0;
    const ToleranceResult none = run_tolerance(some);
    CHECK(c.fidelity_draws == 10);
    CHECK(none.fidelity_draws == 0);
    CHECK(c.mean_steps == a.mean_steps);
    CHECK(c.inside == a.inside);
    CHECK(none.mean_steps == a.mean_steps);
    CHECK_THROWS_AS(ToleranceModel(some).ces_tristimuli(ToleranceModel(some).nominal_draw()), Error);
}
