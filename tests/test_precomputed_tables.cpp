// The tables generated at build time (tools/generate_tables.cpp, precomputed_tables.hpp) hold
// exactly what the library's compute_* functions give when run now, bit for bit; and the Ohno
// table, interpolated, reproduces the Planckian locus of a direct Planck sum (CIE 15:2004 9.5,
// Planck's law with c2 = 1.4388e-2 m K) to 1e-12 in CIE 1960 uv.
#include "lampwright/colour/colour_fidelity.hpp"
#include "lampwright/colour/colour_rendering.hpp"
#include "lampwright/colour/precomputed_tables.hpp"
#include "lampwright/colour/temperature.hpp"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <cstring>
#include <span>
#include <vector>

using namespace lampwright;

namespace {

// Same length and the same bits in every value (memcmp: -0.0 and NaN compare as bits too).
void check_same_bits(std::span<const double> generated, const std::vector<double>& computed) {
    REQUIRE(!generated.empty());
    REQUIRE(generated.size() == computed.size());
    std::size_t differing = 0;
    for (std::size_t i = 0; i < computed.size(); ++i)
        if (std::memcmp(&generated[i], &computed[i], sizeof(double)) != 0) ++differing;
    CHECK(differing == 0);
}

}  // namespace

TEST_CASE("generated tables: equal to a fresh computation, bit for bit") {
    SUBCASE("Ohno Planckian table") { check_same_bits(precomputed::ohno_planck_table(), compute_ohno_planck_table()); }
    SUBCASE("Robertson isotemperature lines") { check_same_bits(precomputed::robertson_lines(), compute_robertson_lines()); }
    SUBCASE("CIE 13.3 Planckian reference table") {
        check_same_bits(precomputed::cie133_planck_reference(), compute_cie133_planck_reference_table());
    }
    SUBCASE("CIE 224 reference J'a'b' table") { check_same_bits(precomputed::cie224_reference_jab(), compute_cie224_reference_jab_table()); }
}

TEST_CASE("generated tables: their sizes follow from the grids") {
    // Ohno: 1000/1.001^2 .. 100000 x 1.001^2 K at 0.1 % steps: ln(100 x 1.001^4) / ln(1.001) + 1
    // = 4613 points (the loop's accumulated rounding may drop the last), three values each.
    const auto ohno = precomputed::ohno_planck_table();
    CHECK(ohno.size() % 3 == 0);
    CHECK(std::abs(static_cast<double>(ohno.size() / 3) - (std::log(100.0) / std::log(1.001) + 5)) <= 1.0);
    // Robertson: 0-100 mired by 10 (11 lines), 125-1000 by 25 (36 lines), five values each.
    CHECK(precomputed::robertson_lines().size() == 47 * 5);
    // CIE 13.3: 198-1002 mired (805 rows: white u, v, c, d and W*, U*, V* of 14 samples).
    CHECK(precomputed::cie133_planck_reference().size() == 805 * 46);
    // CIE 224: 10-1000 mired (991 rows of 99 samples x 3).
    CHECK(precomputed::cie224_reference_jab().size() == 991 * 297);
}

TEST_CASE("planck_uv_tabulated: within 1e-12 of the direct Planck sum") {
    double worst = 0;
    for (double t = 1000; t <= 100000; t *= 1.0173) {
        const UV a = planck_uv_tabulated(t), b = planck_uv(t);
        worst = std::max({worst, std::abs(a.u - b.u), std::abs(a.v - b.v)});
    }
    CHECK(worst < 1e-12);
    // Outside the table it is the direct sum.
    CHECK(planck_uv_tabulated(500).u == planck_uv(500).u);
}
