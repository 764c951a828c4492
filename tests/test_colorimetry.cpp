// CIE colorimetry of spectra (CIE 15:2004): tristimulus values, chromaticity coordinates, luminous
// efficacy of radiation, against published chromaticities.
#include "test_support.hpp"

#include "lampwright/colour/assessment.hpp"
#include "lampwright/colour/cie_tables.hpp"
#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/colour/illuminants.hpp"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>

using namespace lampwright;

namespace {
double round4(double v) { return std::round(v * 1e4) / 1e4; }
}  // namespace

TEST_CASE("FL1-FL12 chromaticities match CIE 15:2004 Table T.8 to the printed 4 decimals") {
    // Our x, y rounded to 4 decimals must lie within one unit of the last printed digit:
    // |round4(ours) - printed| <= 0.0001, i.e. |ours - printed| <= 0.00015.
    double worst = 0;
    for (const auto& fl : lwtest::kCie15TableT8) {
        CAPTURE(fl.n);
        const Chromaticity c = chromaticity(tristimulus(cie_fl_illuminant(fl.n)));
        CHECK(std::abs(round4(c.x) - fl.x) <= 0.0001 + 1e-12);  // CIE 15:2004 Table T.8
        CHECK(std::abs(round4(c.y) - fl.y) <= 0.0001 + 1e-12);  // CIE 15:2004 Table T.8
        CHECK(std::abs(c.x - fl.x) <= 0.00015);                 // CIE 15:2004 Table T.8
        CHECK(std::abs(c.y - fl.y) <= 0.00015);                 // CIE 15:2004 Table T.8
        worst = std::max({worst, std::abs(c.x - fl.x), std::abs(c.y - fl.y)});
    }
    MESSAGE("FL1-FL12: worst |xy - CIE 15:2004 Table T.8| = " << worst);
}

TEST_CASE("illuminant A, D65 and D50 chromaticities match CIE 15:2004 Table T.3 (2-degree observer)") {
    // A from its defining formula; D65 and D50 from S0, S1, S2 at 6504 K and 5003 K (the nominal
    // 6500 K and 5000 K times 1.4388/1.4380, CIE 15:2004 3.1).
    const Chromaticity a = chromaticity(tristimulus(cie_illuminant_a()));
    CHECK(std::abs(a.x - 0.44757) <= 2e-5);  // CIE 15:2004 Table T.3
    CHECK(std::abs(a.y - 0.40745) <= 2e-5);  // CIE 15:2004 Table T.3
    const Chromaticity d65 = chromaticity(tristimulus(lampwright::daylight(6504)));
    CHECK(std::abs(d65.x - 0.31272) <= 5e-5);  // CIE 15:2004 Table T.3
    CHECK(std::abs(d65.y - 0.32903) <= 5e-5);  // CIE 15:2004 Table T.3
    const Chromaticity d50 = chromaticity(tristimulus(lampwright::daylight(5003)));
    CHECK(std::abs(d50.x - 0.34567) <= 5e-5);  // CIE 15:2004 Table T.3
    CHECK(std::abs(d50.y - 0.35850) <= 5e-5);  // CIE 15:2004 Table T.3
    MESSAGE("A  dx " << a.x - 0.44757 << " dy " << a.y - 0.40745);
    MESSAGE("D65 dx " << d65.x - 0.31272 << " dy " << d65.y - 0.32903);
    MESSAGE("D50 dx " << d50.x - 0.34567 << " dy " << d50.y - 0.35850);
}

TEST_CASE("illuminant A, D65 and D50 chromaticities for the 10-degree observer") {
    // CIE 15:2004 Table T.3, 10-degree columns: A (0.45117, 0.40594), D65 (0.31382, 0.33100),
    // D50 (0.34773, 0.35952) -- from memory.
    const Chromaticity a = chromaticity(tristimulus(cie_illuminant_a(), Observer::cie1964_10deg));
    CHECK(std::abs(a.x - 0.45117) <= 5e-5);  // CIE 15:2004 Table T.3, from memory
    CHECK(std::abs(a.y - 0.40594) <= 5e-5);  // CIE 15:2004 Table T.3, from memory
    const Chromaticity d65 = chromaticity(tristimulus(lampwright::daylight(6504), Observer::cie1964_10deg));
    CHECK(std::abs(d65.x - 0.31382) <= 5e-5);  // CIE 15:2004 Table T.3, from memory
    CHECK(std::abs(d65.y - 0.33100) <= 5e-5);  // CIE 15:2004 Table T.3, from memory
    const Chromaticity d50 = chromaticity(tristimulus(lampwright::daylight(5003), Observer::cie1964_10deg));
    CHECK(std::abs(d50.x - 0.34773) <= 5e-5);  // CIE 15:2004 Table T.3, from memory
    CHECK(std::abs(d50.y - 0.35952) <= 5e-5);  // CIE 15:2004 Table T.3, from memory
}

TEST_CASE("the equal-energy spectrum has x = y = 1/3 to the precision of the tables") {
    // CIE 15:2004: the colour-matching functions have equal areas, so illuminant E is at (1/3, 1/3);
    // the 5 nm tables and their Sprague interpolation hold this to about 1e-4.
    const Spectrum e{"E", kColourFirstNm, std::vector<double>(kColourSize, 1.0)};
    for (const auto obs : {Observer::cie1931_2deg, Observer::cie1964_10deg}) {
        const Chromaticity c = chromaticity(tristimulus(e, obs));
        CHECK(std::abs(c.x - 1.0 / 3) <= 1e-4);  // CIE 15:2004 (illuminant E)
        CHECK(std::abs(c.y - 1.0 / 3) <= 1e-4);  // CIE 15:2004 (illuminant E)
    }
}

TEST_CASE("chromaticity conversions follow CIE 15:2004 eqs. 8.1-8.2 and invert each other") {
    // D65 printed x, y -> u', v' printed in CIE 15:2004 Table T.3 as 0.1978, 0.4683 (from memory).
    const Chromaticity d65{0.31272, 0.32903};
    const UV up = uv_1976_from_xy(d65);
    CHECK(std::abs(up.u - 0.1978) <= 0.00005 + 1e-12);  // CIE 15:2004 Table T.3, from memory
    CHECK(std::abs(up.v - 0.4683) <= 0.00005 + 1e-12);  // CIE 15:2004 Table T.3, from memory
    const UV u60 = uv_1960_from_xy(d65);
    CHECK(std::abs(u60.u - up.u) <= 1e-15);        // CIE 15:2004 eq. 8.1: u' = u
    CHECK(std::abs(u60.v * 1.5 - up.v) <= 1e-15);  // CIE 15:2004 eq. 8.1: v' = 1.5 v

    // From X, Y, Z and from x, y agree; the inverses return the start point.
    const XYZ c{41.2, 35.7, 18.9};
    const Chromaticity xy = chromaticity(c);
    CHECK(xy.x == doctest::Approx(41.2 / 95.8).epsilon(1e-14));  // x = X/(X+Y+Z), CIE 15:2004 eq. 7.3
    CHECK(xy.y == doctest::Approx(35.7 / 95.8).epsilon(1e-14));  // CIE 15:2004 eqs. 7.3, 8.1 (algebraic identity)
    CHECK(std::abs(uv_1960(c).u - uv_1960_from_xy(xy).u) <= 1e-15);  // CIE 15:2004 eq. 8.1 (common practice, no source for the identity)
    CHECK(std::abs(uv_1960(c).v - uv_1960_from_xy(xy).v) <= 1e-15);  // CIE 15:2004 eqs. 7.3, 8.1 (algebraic identity)
    CHECK(std::abs(uv_1976(c).v - uv_1976_from_xy(xy).v) <= 1e-15);  // CIE 15:2004 eqs. 7.3, 8.1 (algebraic identity)
    const Chromaticity back60 = xy_from_uv_1960(uv_1960(c));
    const Chromaticity back76 = xy_from_uv_1976(uv_1976(c));
    CHECK(std::abs(back60.x - xy.x) <= 1e-15);  // algebraic inverse, common practice, no source
    CHECK(std::abs(back60.y - xy.y) <= 1e-15);  // CIE 15:2004 eqs. 7.3, 8.1 (algebraic identity)
    CHECK(std::abs(back76.x - xy.x) <= 1e-15);  // CIE 15:2004 eqs. 7.3, 8.1 (algebraic identity)
    CHECK(std::abs(back76.y - xy.y) <= 1e-15);  // CIE 15:2004 eqs. 7.3, 8.1 (algebraic identity)
}

TEST_CASE("luminous efficacy of radiation: 683 lm/W at 555 nm, and V(l) averaged for equal energy") {
    // Km = 683.002 lm/W and V(555 nm) = 1 (CIE 15:2004 Table T.4; CIE S 017; SI definition of the candela).
    Spectrum mono{"555 nm", kColourFirstNm, std::vector<double>(kColourSize, 0.0)};
    mono.values[555 - kColourFirstNm] = 1.0;
    CHECK(std::abs(luminous_efficacy_of_radiation(mono) - 683.002) <= 1e-9);  // CIE 15:2004 Table T.4, CIE S 017: Km = 683.002 lm/W

    // Equal energy on 360-830 nm: LER = 683 * sum V(l) / 471 with V from the official 1 nm table.
    const std::string path = lwtest::reference_file("cie1924_photopic_v.csv");
    LW_SKIP_UNLESS_FILE(path);
    const auto v = lwtest::read_table(path).spectra.at(0);
    double sum_v = 0;
    for (std::size_t i = 0; i < v.values.size(); ++i)
        if (v.wavelengths_nm[i] >= kColourFirstNm && v.wavelengths_nm[i] <= kColourLastNm) sum_v += v.values[i];
    const Spectrum e{"E", kColourFirstNm, std::vector<double>(kColourSize, 1.0)};
    const double expected = 683.002 * sum_v / kColourSize;
    CHECK(std::abs(luminous_efficacy_of_radiation(e) / expected - 1) <= 1e-5);  // CIE 1924 V(l), ISO 23539:2005 1 nm table
    MESSAGE("equal-energy LER relative difference against the 1 nm V(l): " << luminous_efficacy_of_radiation(e) / expected - 1);
}

TEST_CASE("LER counts radiant power outside the visible: a UV tail lowers it") {
    // luminous_efficacy_of_radiation divides by the whole radiant integral (colorimetry.hpp
    // contract; CIE 15:2004 definition of luminous efficacy of radiation).
    Spectrum visible{"v", 380, std::vector<double>(401, 1.0)};
    Spectrum with_uv{"uv", 300, std::vector<double>(481, 1.0)};
    for (int nm = 300; nm < 380; ++nm) with_uv.values[nm - 300] = 0;
    with_uv.values[0] = 401.0;  // as much power at 300 nm as in all of 380-780 nm
    const double ler_v = luminous_efficacy_of_radiation(visible), ler_uv = luminous_efficacy_of_radiation(with_uv);
    // The 300 nm line lies outside 360-830 nm and adds no luminous flux; the two spectra differ
    // on 360-379 nm only (extension by 1 versus measured 0), where V(l) < 1e-4.
    CHECK(std::abs(ler_uv / ler_v - 0.5) <= 1e-4);  // half the power is at 300 nm; common practice, no source
}

TEST_CASE("scaling a spectrum by 7.3 leaves x, y, CCT, Duv, Ra and LER unchanged") {
    // All of these are ratios of tristimulus sums (CIE 15:2004; CIE 13.3-1995), so invariant under scale.
    for (const Spectrum& s : {cie_fl_illuminant(2), planckian(3200), lampwright::daylight(6504)}) {
        CAPTURE(s.name);
        const Assessment a = assess(s), b = assess(scaled(s, 7.3));
        auto rel = [](double p, double q) { return std::abs(p - q) / std::max(std::abs(p), 1e-300); };
        CHECK(rel(a.xy.x, b.xy.x) < 1e-9);  // invariance, common practice, no source
        CHECK(rel(a.xy.y, b.xy.y) < 1e-9);  // invariance under scale; common practice, no source
        REQUIRE(a.cct.valid);  // precondition; common practice, no source
        REQUIRE(b.cct.valid);  // precondition; common practice, no source
        CHECK(rel(a.cct.cct_K, b.cct.cct_K) < 1e-9);  // invariance under scale; common practice, no source
        CHECK(rel(a.cct.duv, b.cct.duv) < 1e-9);  // invariance under scale; common practice, no source
        REQUIRE(a.rendering);  // precondition; common practice, no source
        REQUIRE(b.rendering);  // precondition; common practice, no source
        CHECK(rel(a.rendering->ra, b.rendering->ra) < 1e-9);  // invariance under scale; common practice, no source
        for (int i = 0; i < 14; ++i) CHECK(rel(a.rendering->ri[i], b.rendering->ri[i]) < 1e-9);  // invariance under scale; common practice, no source
        CHECK(rel(a.ler_lm_per_W, b.ler_lm_per_W) < 1e-9);  // invariance under scale; common practice, no source
    }
}

TEST_CASE("outside its data a spectrum is extended by its nearest value on 360-830 nm") {
    // CIE 15:2004 7.2.2.1: missing values at the ends are replaced by the nearest measured value.
    Spectrum s{"s", 380, {}};
    for (int nm = 380; nm <= 780; ++nm) s.values.push_back(nm);
    const auto v = colour_range_values(s);
    REQUIRE(v.size() == static_cast<std::size_t>(kColourSize));  // precondition; common practice, no source
    CHECK(v[0] == 380);                              // 360 nm takes the 380 nm value, CIE 15:2004 7.2.2.1
    CHECK(v[379 - kColourFirstNm] == 380);           // CIE 15:2004 7.2.2.1
    CHECK(v[600 - kColourFirstNm] == 600);  // CIE 15:2004 7.2.2.1
    CHECK(v[kColourSize - 1] == 780);                // 830 nm takes the 780 nm value
    CHECK(s.at_nearest(100) == 380);  // CIE 15:2004 7.2.2.1
    CHECK(s.at_nearest(2000) == 780);  // CIE 15:2004 7.2.2.1
}

TEST_CASE("a relative spectrum of huge finite values (1e306) gives the same relative figures as at 1, X Y Z scaled") {
    Spectrum one = planckian(4000);
    const Assessment small = assess(one);
    const Spectrum big = scaled(one, 1e306 / *std::max_element(one.values.begin(), one.values.end()));
    const Assessment a = assess(big);
    CHECK(a.xy.x == doctest::Approx(small.xy.x).epsilon(1e-12));
    CHECK(a.xy.y == doctest::Approx(small.xy.y).epsilon(1e-12));
    CHECK(a.ler_lm_per_W == doctest::Approx(small.ler_lm_per_W).epsilon(1e-12));
    CHECK(a.cct.cct_K == doctest::Approx(4000).epsilon(1e-4));
    CHECK(a.features.centroid_nm == doctest::Approx(small.features.centroid_nm).epsilon(1e-12));
    REQUIRE(a.rendering);
    CHECK(a.rendering->ra == doctest::Approx(100).epsilon(1e-6));
    CHECK(std::isfinite(a.xyz.Y));
    CHECK(a.xyz.Y / small.xyz.Y == doctest::Approx(1e306 / *std::max_element(one.values.begin(), one.values.end())).epsilon(1e-12));
}

TEST_CASE("a spectrum whose X, Y, Z overflow (values 1e308) is rejected naming the overflowing figures") {
    Spectrum s;
    s.name = "huge";
    s.first_nm = 360;
    s.values.assign(kColourSize, 1e308);
    try {
        (void)assess(s);
        FAIL("no error");
    } catch (const Error& e) {
        CHECK(std::string(e.what()) == "values too large or not finite: X, Y, Z overflow or are undefined");
    }
}
