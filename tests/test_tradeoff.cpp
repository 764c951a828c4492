// Tests of the trade-off front and the best-k-of-n choice (src/lampwright/design/tradeoff.hpp), and of
// their fit command-line options.
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/design/targets.hpp"
#include "lampwright/design/tradeoff.hpp"
#include "lampwright/report/fit_report.hpp"

#include "test_support.hpp"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

using namespace lampwright;

namespace {

using lwtest::example_recipe;
using lwtest::fit_problem;
using lwtest::quote;
using lwtest::run_cli;

BlendResult blend_of(const FitProblem& p, const std::vector<double>& w) {
    BlendInput b = p.blend;
    b.components.clear();
    for (std::size_t i = 0; i < w.size(); ++i)
        if (w[i] > 0) {
            b.components.push_back(p.blend.components[i]);
            b.components.back().mass_fraction = w[i];
        }
    return evaluate_blend(b);
}

// Every point of a front, re-evaluated independently with evaluate_blend from its fractions,
// meets its floor and the chromaticity tolerance (the definition of the epsilon-constraint
// method: each point is a feasible solution of its constrained problem; common practice, no source).
void check_front_points(const FitProblem& p, const TradeoffFront& f) {
    for (const auto& pt : f.points) {
        CAPTURE(pt.floor);
        REQUIRE(pt.feasible);
        double sum = 0;
        for (double w : pt.mass_fractions) {
            CHECK(w >= 0);
            CHECK(w <= 1);
            sum += w;
        }
        CHECK(sum == doctest::Approx(1.0).epsilon(1e-9));
        const BlendResult r = blend_of(p, pt.mass_fractions);
        REQUIRE(r.assessment.rendering);
        REQUIRE(r.assessment.fidelity);
        const double floor_figure = f.kind == FrontKind::ra_r9         ? r.assessment.rendering->ri[8]
                                    : f.kind == FrontKind::rf_efficacy ? r.assessment.fidelity->rf
                                                                       : r.assessment.rendering->ra;
        CHECK(pt.rf == doctest::Approx(r.assessment.fidelity->rf).epsilon(1e-9));
        CHECK(pt.rg == doctest::Approx(r.assessment.fidelity->rg).epsilon(1e-9));
        CHECK(floor_figure >= pt.floor);
        CHECK(lwtest::duv_prime(r.assessment, p.target.xy) <= p.tolerance_uv_prime);
        const double objective = f.kind == FrontKind::ra_efficacy || f.kind == FrontKind::rf_efficacy ? r.luminous_efficacy_absorbed
                                 : f.kind == FrontKind::ra_ler    ? r.assessment.ler_lm_per_W
                                                                  : r.assessment.rendering->ra;
        CHECK(objective == doctest::Approx(pt.objective).epsilon(1e-9));
    }
}

// Cells of a CSV line (RFC 4180 quoting: commas inside double quotes do not separate).
int csv_cells(const std::string& line) {
    int cells = 1;
    bool quoted = false;
    for (char ch : line) {
        if (ch == '"') quoted = !quoted;
        else if (ch == ',' && !quoted) ++cells;
    }
    return cells;
}

}  // namespace

TEST_CASE("tradeoff: the efficacy-Ra front is monotone and every point meets its constraints") {
    // Epsilon-constraint method (Haimes, Lasdon and Wismer 1971): raising the floor on Ra shrinks
    // the feasible set, so the best efficacy cannot rise. Common practice, no source beyond that.
    // Four mercury-excited components at 4000 K: a real trade-off (the LED blend has its best Ra and
    // its best efficacy at the same blend, a front of one point).
    const FitProblem p = fit_problem("multiband_5000K.toml", target_cct(4000, 0.0), FitObjective::efficacy);
    const TradeoffFront f = tradeoff_front(p, FrontKind::ra_efficacy, 8);
    REQUIRE(f.points.size() == 8);
    check_front_points(p, f);
    for (std::size_t k = 1; k < f.points.size(); ++k) {
        CHECK(f.points[k].floor > f.points[k - 1].floor);
        CHECK(f.points[k].objective <= f.points[k - 1].objective);
    }
    // The ends: the first point is the unconstrained best efficacy, the last reaches the top floor.
    const FitResult best = solve(p);
    REQUIRE(best.feasible);
    CHECK(f.points.front().objective >= best.result.luminous_efficacy_absorbed - 1e-9);
    CHECK(f.points.back().ra >= f.floor_high);
    CHECK(f.floor_high > f.floor_low);  // a real trade-off on this blend (about 1.2 Ra with the grain-area shares)
    MESSAGE("front ends: Ra " << f.points.front().ra << " at " << f.points.front().efficacy << " lm/W absorbed; Ra " << f.points.back().ra
                              << " at " << f.points.back().efficacy << " lm/W absorbed");
    // CSV: a header and one row per point, the same number of cells each.
    std::istringstream csv(front_csv(p, f));
    std::string line, header;
    std::getline(csv, header);
    CHECK(header.rfind("min_Ra,feasible,objective_efficacy", 0) == 0);
    int rows = 0;
    while (std::getline(csv, line)) {
        ++rows;
        CHECK(csv_cells(line) == csv_cells(header));
    }
    CHECK(rows == 8);
    const std::string svg = front_svg(p, f);
    CHECK(svg.find("<svg") != std::string::npos);
    CHECK(svg.find("</svg>") != std::string::npos);
}

TEST_CASE("tradeoff: the Ra-R9 front on three components") {
    // Same monotonicity argument as above, R9 floor and Ra maximised (common practice, no source).
    const FitProblem p = fit_problem("triband_4000K.toml", target_cct(3500, 0.0), FitObjective::ra);
    const TradeoffFront f = tradeoff_front(p, FrontKind::ra_r9, 5);
    check_front_points(p, f);
    for (std::size_t k = 1; k < f.points.size(); ++k) CHECK(f.points[k].objective <= f.points[k - 1].objective);
}

TEST_CASE("tradeoff: the efficacy-Rf front (CIE 224 Rf floor) is monotone and every point meets its floor") {
    // The epsilon-constraint argument of the Ra front with the floor on Rf (Haimes, Lasdon and
    // Wismer 1971; common practice, no source); each point re-checked with evaluate_blend.
    const FitProblem p = fit_problem("multiband_5000K.toml", target_cct(4000, 0.0), FitObjective::efficacy);
    const TradeoffFront f = tradeoff_front(p, FrontKind::rf_efficacy, 5);
    REQUIRE(f.points.size() == 5);
    CHECK(f.floor_label == "Rf");
    check_front_points(p, f);
    for (std::size_t k = 1; k < f.points.size(); ++k) CHECK(f.points[k].objective <= f.points[k - 1].objective);
    CHECK(f.floor_high > f.floor_low);
    MESSAGE("efficacy-Rf front: Rf " << f.points.front().rf << " at " << f.points.front().efficacy << " lm/W absorbed; Rf "
                                     << f.points.back().rf << " at " << f.points.back().efficacy);
    std::istringstream csv(front_csv(p, f));
    std::string header;
    std::getline(csv, header);
    CHECK(header.rfind("min_Rf,feasible,objective_efficacy", 0) == 0);
    CHECK(parse_front_kind("rf-efficacy") == FrontKind::rf_efficacy);
}

TEST_CASE("tradeoff: the front is reproducible and rejects a bad number of points") {
    // Deterministic solver (common practice, no source).
    const FitProblem p = fit_problem("triband_4000K.toml", target_cct(3500, 0.0), FitObjective::ra);
    const TradeoffFront a = tradeoff_front(p, FrontKind::ra_ler, 4), b = tradeoff_front(p, FrontKind::ra_ler, 4);
    REQUIRE(a.points.size() == b.points.size());
    for (std::size_t k = 0; k < a.points.size(); ++k) CHECK(a.points[k].mass_fractions == b.points[k].mass_fractions);
    CHECK_THROWS_AS(tradeoff_front(p, FrontKind::ra_ler, 1), Error);
    CHECK_THROWS_AS(parse_front_kind("efficiency"), Error);
    // No blend on a target far outside the components' triangle: an error, not a front.
    const FitProblem far = fit_problem("triband_4000K.toml", target_xy(0.45, 0.20), FitObjective::ra);
    CHECK_THROWS_AS(tradeoff_front(far, FrontKind::ra_efficacy, 3), Error);
}

TEST_CASE("tradeoff: best k of n is at least as good as every subset solved alone") {
    // Exhaustive enumeration is the reference (common practice, no source).
    const FitProblem p = fit_problem("led395_module.toml", target_cct(4000, 0.0), FitObjective::ra);
    const SubsetChoice c = choose_components(p, 3, {});
    REQUIRE(c.trials.size() == 4);  // C(4, 3)
    REQUIRE(c.found);
    CHECK(c.result.feasible);
    for (const auto& con : c.result.constraints) CHECK_MESSAGE(con.satisfied, con.text);
    int feasible = 0;
    for (const auto& t : c.trials) {
        FitProblem q = p;
        q.blend.components.clear();
        for (std::size_t i : t.indices) q.blend.components.push_back(p.blend.components[i]);
        const FitResult alone = solve(q);
        CAPTURE(t.labels);
        CHECK(alone.feasible == t.feasible);
        if (!t.feasible) {
            CHECK_FALSE(t.message.empty());
            continue;
        }
        ++feasible;
        CHECK(c.result.objective_value >= alone.objective_value);
    }
    CHECK(feasible >= 1);
    // The answer uses exactly k components, the others at zero; fractions sum to one.
    int used = 0;
    double sum = 0;
    for (double w : c.result.mass_fractions) used += w > 0 ? 1 : 0, sum += w;
    CHECK(used == 3);
    CHECK(sum == doctest::Approx(1.0).epsilon(1e-9));
    const auto& best = c.trials[c.best];
    for (std::size_t i = 0; i < c.result.mass_fractions.size(); ++i)
        CHECK((c.result.mass_fractions[i] > 0) == (std::find(best.indices.begin(), best.indices.end(), i) != best.indices.end()));
    // The objective of the answer is that of its blend.
    CHECK(c.result.result.assessment.rendering->ra == doctest::Approx(c.result.objective_value).epsilon(1e-9));

    SUBCASE("k = n is the plain solve") {
        const SubsetChoice all = choose_components(p, 4, {});
        REQUIRE(all.found);
        CHECK(all.result.mass_fractions == solve(p).mass_fractions);
    }
    SUBCASE("infeasible subsets are reported: two components cannot reach a point off their line") {
        const SubsetChoice two = choose_components(p, 2, {});
        CHECK(two.trials.size() == 6);
        int infeasible = 0;
        for (const auto& t : two.trials) infeasible += t.feasible ? 0 : 1;
        CHECK(infeasible >= 1);
    }
    SUBCASE("bad k") {
        CHECK_THROWS_AS(choose_components(p, 0, {}), Error);
        CHECK_THROWS_AS(choose_components(p, 5, {}), Error);
    }
}

TEST_CASE("fit command: front, choose and their usage errors") {
    // The CLI contract: exit 0 on success, 2 for usage errors (common practice, no source).
    const lwtest::TempDir dir;
    const std::string csv = dir.file("lampwright_front_cli.csv"), svg = dir.file("lampwright_front_cli.svg");
    const std::string recipe = quote(example_recipe("triband_4000K.toml"));
    REQUIRE(run_cli("fit " + recipe + " --cct 3500 --front ra-efficacy --points 4 --front-csv " + quote(csv) + " --front-svg " + quote(svg))
                .exit_code == 0);
    std::ifstream in(csv);
    std::string header;
    std::getline(in, header);
    CHECK(header.rfind("min_Ra,", 0) == 0);
    CHECK(lwtest::slurp(svg).find("<svg") != std::string::npos);

    CHECK(run_cli("fit " + quote(example_recipe("led395_module.toml")) + " --cct 4000 --maximize ra --choose 3").exit_code == 0);
    // No single component reaches a white: every subset infeasible, listed, exit 1.
    CHECK(run_cli("fit " + quote(example_recipe("led395_module.toml")) + " --cct 4000 --choose 1").exit_code == 1);

    auto rc = [&](const std::string& args) { return run_cli("fit " + recipe + " " + args).exit_code; };
    CHECK(rc("--cct 3500 --front ra-efficacy --points 1") == 2);
    CHECK(rc("--cct 3500 --front efficiency") == 2);
    CHECK(rc("--cct 3500 --points 5") == 2);
    CHECK(rc("--cct 3500 --front ra-efficacy --maximize ra") == 2);
    CHECK(rc("--cct 3500 --front ra-efficacy --min-ra 80") == 2);
    CHECK(rc("--cct 3500 --front rf-efficacy --min-rf 80") == 2);  // the swept floor
    CHECK(rc("--cct 3500 --maximize rg --r9-weight 0.3") == 2);      // the weight of another objective
    CHECK(rc("--cct 3500 --maximize rf-rg --rg-weight 1.5") == 2);
    CHECK(rc("--cct 3500 --choose 4") == 2);  // three components in this recipe
    CHECK(rc("--cct 3500 --choose 0") == 2);
}
