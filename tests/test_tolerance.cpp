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

    auto rc = [&](const std::string& args) { return run_cli("fit " + recipe + " --cct 4000 " + args).exit_code; };
    CHECK(rc("--draws 100") == 2);
    CHECK(rc("--tolerance-run --weighing-sigma 0.01 --draws 0") == 2);
    CHECK(rc("--tolerance-run --weighing-sigma -0.01") == 2);
    CHECK(rc("--tolerance-run --weighing-sigma 0.01,0.01") == 2);
    CHECK(rc("--tolerance-run --peak-sigma abc") == 2);
    CHECK(rc("--tolerance-run --weighing-sigma 0.01 --steps 0") == 2);
    CHECK(rc("--tolerance-run") == 2);  // no sigma: nothing to draw
    CHECK(rc("--tolerance-run --draws 1000 --weighing-sigma 0.01,0.02,0.005 --steps 2") == 0);
}
