// CIE 224:2017 Rf and ANSI/IES TM-30-20 Rg and hue-bin figures: published values of the CIE
// fluorescent illuminants, the figures that hold by construction (a source equal to its reference),
// invariants (scale, continuity of the reference in CCT) and the mired table of the reference
// against direct computation.
#include "test_support.hpp"

#include "lampwright/colour/cie_tables.hpp"
#include "lampwright/colour/colour_fidelity.hpp"
#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/colour/illuminants.hpp"
#include "lampwright/colour/temperature.hpp"
#include "lampwright/colour/assessment.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/core/interpolation.hpp"
#include "lampwright/io/spectrum_io.hpp"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <vector>

using namespace lampwright;

namespace {

CctResult cct_of(const Spectrum& s) { return correlated_colour_temperature(uv_1960(tristimulus(s))); }

ColourFidelity fidelity_of(const Spectrum& s) {
    const CctResult c = cct_of(s);
    REQUIRE(c.valid);  // precondition; common practice, no source
    return colour_fidelity(s, c.cct_K);
}

}  // namespace

TEST_CASE("Rf = 100 and Rg = 100 for Planckian sources at 2700-3900 K (CIE 224: the source is its own reference)") {
    // CIE 224:2017, 4.3: below 4000 K the reference is the Planckian radiator of the source's CCT, so
    // every CES difference is zero (up to the CCT's own error, < 0.03 K) and Rf = 10 ln(e^10 + 1) =
    // 100.0005; TM-30-20: equal polygons give Rg = 100, zero chroma and hue shifts.
    for (double t = 2700; t <= 3900; t += 100) {
        CAPTURE(t);
        const auto f = fidelity_of(planckian(t));
        CHECK(f.reference == FidelityReference::planckian);  // CIE 224:2017, 4.3
        CHECK(std::abs(f.rf - 100) <= 1e-3);                 // CIE 224:2017 eq. 10 with dE' = 0
        CHECK(std::abs(f.rg - 100) <= 1e-3);                 // TM-30-20, equal polygons
        for (int j = 0; j < kTm30HueBins; ++j) {
            CHECK(std::abs(f.rf_h[j] - 100) <= 1e-3);       // TM-30-20, dE' = 0 in every bin
            CHECK(std::abs(f.rcs_h_percent[j]) <= 1e-3);    // TM-30-20, no chroma shift
            CHECK(std::abs(f.rhs_h[j]) <= 1e-5);            // TM-30-20, no hue shift
        }
    }
}

TEST_CASE("Rf = 100 and Rg = 100 for CIE D-series illuminants at 5001-9000 K") {
    // CIE 224:2017, 4.3: above 5000 K the reference is CIE daylight of the source's CCT. The test
    // illuminant is CIE daylight with M1, M2 rounded to 3 decimals (CIE 15:2004, 3.1) and its CCT
    // lies within a few kelvin of its nominal temperature; the reference uses them unrounded at
    // that CCT. Measured worst below; bound 0.01 (TM-30-20 reports Rf, Rg to integers).
    double worst_rf = 0, worst_rg = 0;
    for (double t = 5001; t <= 9000; t += 111) {
        CAPTURE(t);
        const auto f = fidelity_of(lampwright::daylight(t));
        // CIE 224:2017, 4.3: daylight above 5000 K; the D-series at 5001 K has a CCT a little below
        // 5000 K, where the mix is almost all daylight.
        CHECK(f.daylight_weight >= 0.99);
        CHECK(std::abs(f.rf - 100) <= 0.01);  // CIE 224:2017, source equal to its reference
        CHECK(std::abs(f.rg - 100) <= 0.01);  // TM-30-20, equal polygons
        worst_rf = std::max(worst_rf, std::abs(f.rf - 100));
        worst_rg = std::max(worst_rg, std::abs(f.rg - 100));
    }
    MESSAGE("D-series 5001-9000 K: worst |Rf - 100| " << worst_rf << ", |Rg - 100| " << worst_rg);
}

TEST_CASE("CIE FL1 and FL2: published Rf, Rg and CCT") {
    // CIE 224:2017 calculator: FL1 Rf 80.6, FL2 Rf 70.1 (from memory); TM-30-18 calculator: FL2
    // Rf 70, Rg 86, CCT 4225 K, Duv 0.0019 (from memory). The 5 nm tables are resampled to 1 nm
    // (Sprague) here; published figures are rounded to 0.1 (Rf) and 1 (Rg): bounds 0.1 and 0.5.
    // Duv: measured 0.00178 here (Sprague 1 nm over 360-830 nm, the project's CIE 15 colorimetry);
    // the recalled 0.0019 is from memory and may come from another interpolation of the 5 nm
    // table: bound 2e-4, and the difference is reported.
    const auto fl1 = fidelity_of(cie_fl_illuminant(1));
    const auto fl2 = fidelity_of(cie_fl_illuminant(2));
    const CctResult c2 = cct_of(cie_fl_illuminant(2));
    MESSAGE("FL1 Rf " << fl1.rf << " Rg " << fl1.rg << "; FL2 Rf " << fl2.rf << " Rg " << fl2.rg << " CCT " << c2.cct_K << " Duv "
                      << c2.duv);
    CHECK(std::abs(fl1.rf - 80.6) <= 0.1);      // CIE 224 calculator, from memory
    CHECK(std::abs(fl2.rf - 70.1) <= 0.1);      // CIE 224 calculator, from memory
    CHECK(std::abs(fl2.rg - 86) <= 0.5);        // TM-30-18 calculator, from memory
    CHECK(std::abs(c2.cct_K - 4225) <= 1.0);    // TM-30-18 calculator, from memory
    CHECK(std::abs(c2.duv - 0.0019) <= 0.0002);  // TM-30-18 calculator, from memory
    CHECK(fl2.reference == FidelityReference::mix);  // CIE 224:2017, 4.3: 4225 K lies in 4000-5000 K
    CHECK(fl2.daylight_weight == doctest::Approx((c2.cct_K - 4000) / 1000));  // CIE 224:2017, 4.3
    int n = 0;
    for (int j = 0; j < kTm30HueBins; ++j) n += fl2.ces_in_bin[j];
    CHECK(n == kCesCount);  // TM-30-20: every sample falls in one bin
}

TEST_CASE("Rf and Rg do not change when the spectrum is scaled") {
    // CIE 224:2017: tristimulus values are normalised to the source's Y10 = 100, so the scale drops
    // out (to rounding); common practice, no source.
    const Spectrum s = cie_fl_illuminant(2);
    const CctResult c = cct_of(s);
    const auto base = colour_fidelity(s, c.cct_K);
    for (double k : {1e-6, 0.37, 1e6}) {
        CAPTURE(k);
        const auto f = colour_fidelity(scaled(s, k), c.cct_K);
        CHECK(std::abs(f.rf - base.rf) <= 1e-9);  // scale invariance
        CHECK(std::abs(f.rg - base.rg) <= 1e-9);  // scale invariance
        for (int i = 0; i < kCesCount; ++i) CHECK(std::abs(f.rf_ces[i] - base.rf_ces[i]) <= 1e-9);  // scale invariance
    }
}

TEST_CASE("the CIE 224 reference is continuous across 4000 K and 5000 K") {
    // CIE 224:2017, 4.3: the daylight weight (T - 4000)/1000 is 0 at 4000 K and 1 at 5000 K, so
    // the mix meets the Planckian and the daylight reference there. Rf of a fixed source (FL2's
    // sums) evaluated against references just either side must agree (no jump), and so must the
    // reference spectra themselves.
    const auto v = colour_range_values(cie_fl_illuminant(2));
    const auto tri = cie224_tristimuli(v.data());
    for (double edge : {kCie224PlanckianBelowK, kCie224DaylightAboveK}) {
        CAPTURE(edge);
        const double eps = 1e-3;
        for (bool tabulated : {true, false}) {
            const auto below = colour_fidelity_from_tristimuli(tri, edge - eps, tabulated);
            const auto above = colour_fidelity_from_tristimuli(tri, edge + eps, tabulated);
            CHECK(below.reference != above.reference);       // CIE 224:2017, 4.3: a change of kind
            CHECK(std::abs(below.rf - above.rf) <= 1e-4);    // continuity
            CHECK(std::abs(below.rg - above.rg) <= 1e-3);    // continuity
        }
        const Spectrum lo = cie224_reference_illuminant(edge - eps), hi = cie224_reference_illuminant(edge + eps);
        double worst = 0;
        for (std::size_t j = 0; j < lo.values.size(); ++j) worst = std::max(worst, std::abs(lo.values[j] / hi.values[j] - 1));
        CHECK(worst <= 1e-5);  // continuity of the reference spectrum (1 mK of CCT)
    }
}

TEST_CASE("the reference illuminant is Planck below 4000 K and CIE daylight above 5000 K, at Y10 = 100") {
    // CIE 224:2017, 4.3.
    const auto& ybar = colour_matching_functions(Observer::cie1964_10deg).xyz[1];
    for (double t : {2700.0, 3999.0, 4500.0, 5001.0, 6500.0}) {
        CAPTURE(t);
        const Spectrum r = cie224_reference_illuminant(t);
        double y = 0;
        for (int nm = kCesFirstNm; nm <= kCesLastNm; ++nm) y += r.values[static_cast<std::size_t>(nm - kColourFirstNm)] * ybar[static_cast<std::size_t>(nm - kColourFirstNm)];
        CHECK(y == doctest::Approx(100).epsilon(1e-12));  // CIE 224:2017, 4.3: each normalised to Y = 100
        const Spectrum p = planckian(t), d = lampwright::daylight(t, true, false);
        const double ratio = r.values[200] / (t < 4000 ? p.values[200] : d.values[200 + kColourFirstNm - d.first_nm]);
        if (t < 4000 || t > 5000)
            for (int nm = 400; nm <= 760; nm += 40) {
                const double ref = t < 4000 ? p.at_nearest(nm) : d.at_nearest(nm);
                CHECK(r.values[static_cast<std::size_t>(nm - kColourFirstNm)] == doctest::Approx(ratio * ref).epsilon(1e-12));  // its shape
            }
    }
}

TEST_CASE("the mired table of the reference gives Rf within 1e-3 of direct computation") {
    // Reference J'a'b' on whole mireds, 4-point Lagrange within each smooth segment, against the
    // reference computed at the exact CCT, for FL1-FL12 and Planck 3000 K held at CCTs over
    // 1000-100000 K (and close to the kinks at 4000 and 5000 K). Bound from the issue: 1e-3 in Rf.
    std::vector<CesTristimuli> sources;
    for (int n = 1; n <= 12; ++n) {
        const auto v = colour_range_values(cie_fl_illuminant(n));
        sources.push_back(cie224_tristimuli(v.data()));
    }
    std::vector<double> ccts;
    for (double m = 10.37; m < 1000; m *= 1.0731) ccts.push_back(1e6 / m);
    for (double t : {3999.5, 4000.4, 4321.0, 4999.6, 5000.3}) ccts.push_back(t);
    double worst_rf = 0, worst_ces = 0, worst_rg = 0;
    for (double t : ccts)
        for (const auto& tri : sources) {
            const auto a = colour_fidelity_from_tristimuli(tri, t, true);
            const auto b = colour_fidelity_from_tristimuli(tri, t, false);
            CAPTURE(t);
            CHECK(std::abs(a.rf - b.rf) < 1e-3);  // the bound for the table
            worst_rf = std::max(worst_rf, std::abs(a.rf - b.rf));
            for (int i = 0; i < kCesCount; ++i) worst_ces = std::max(worst_ces, std::abs(a.rf_ces[i] - b.rf_ces[i]));
            if (a.ces_in_bin == b.ces_in_bin) worst_rg = std::max(worst_rg, std::abs(a.rg - b.rg));
        }
    CHECK(worst_ces < 1e-3);  // the same bound per sample
    MESSAGE("mired table vs direct over " << ccts.size() << " CCTs x 12 sources: worst Rf " << worst_rf << ", Rf,CESi " << worst_ces
                                          << ", Rg " << worst_rg);
}

TEST_CASE("a spectrum is read as zero outside its data for CIE 224") {
    // CIE 224:2017, 4.1: values missing within 380-780 nm are taken as zero.
    Spectrum s{"part", 400, std::vector<double>(301, 1.0)};
    const auto v = cie224_range_values(s);
    CHECK(v[static_cast<std::size_t>(399 - kColourFirstNm)] == 0);  // CIE 224:2017, 4.1
    CHECK(v[static_cast<std::size_t>(400 - kColourFirstNm)] == 1);  // the data itself
    CHECK(v[static_cast<std::size_t>(701 - kColourFirstNm)] == 0);  // CIE 224:2017, 4.1
}

TEST_CASE("CIE 224 refuses a CCT outside 1000-100000 K and a spectrum without power in 380-780 nm") {
    // The CCT range of Ohno's method here (temperature.hpp); common practice, no source.
    const auto v = colour_range_values(cie_fl_illuminant(2));
    const auto tri = cie224_tristimuli(v.data());
    CHECK_THROWS(colour_fidelity_from_tristimuli(tri, 900));
    CHECK_THROWS(colour_fidelity_from_tristimuli(tri, 2e5));
    const Spectrum ir{"ir", 800, std::vector<double>(30, 1.0)};
    CHECK_THROWS(colour_fidelity(ir, 3000));
}

TEST_CASE("CIE 224 at 5 nm: data on a 5 nm grid are computed at 5 nm with the 5 nm CES") {
    // CIE 224:2017, 4.1: 1 nm preferred, 5 nm allowed with the 5 nm CES table.
    SUBCASE("which grids count as 5 nm") {
        std::vector<double> five, one, offset, uneven;
        for (int nm = 380; nm <= 780; nm += 5) five.push_back(nm);
        for (int nm = 380; nm <= 780; ++nm) one.push_back(nm);
        for (int nm = 380; nm <= 780; nm += 5) offset.push_back(nm + 2.5);
        uneven = five;
        uneven[10] += 1;
        CHECK(cie224_interval_for(five) == 5);
        CHECK(cie224_interval_for(one) == 1);
        CHECK(cie224_interval_for(offset) == 1);  // nodes off 380, 385, ...: resampled to 1 nm
        CHECK(cie224_interval_for(uneven) == 1);
        CHECK_THROWS_AS((void)cie224_tristimuli(std::vector<double>(kColourSize, 1.0).data(), 10), Error);
    }
    SUBCASE("the 5 nm CES are the 1 nm table at every fifth node (CIE 224:2017 5 nm table)") {
        // shared/reference/cie224_ces99_5nm.csv, read in place: the CIE's own 5 nm table.
        const std::string path = lwtest::reference_file("cie224_ces99_5nm.csv");
        LW_SKIP_UNLESS_FILE(path);
        const auto f = read_spectrum_file(path);
        REQUIRE(f.spectra.size() == static_cast<std::size_t>(kCesCount));
        const auto& ces = cie224_colour_evaluation_samples();
        double worst = 0;
        for (int i = 0; i < kCesCount; ++i) {
            const auto& s = f.spectra[static_cast<std::size_t>(i)];
            REQUIRE(s.wavelengths_nm.size() == 81);
            for (std::size_t j = 0; j < s.wavelengths_nm.size(); ++j)
                worst = std::max(worst, std::abs(s.values[j] - ces[static_cast<std::size_t>(i)][j * 5]));
        }
        CHECK(worst <= 1e-12);
    }
    SUBCASE("a source equal to its reference at 5 nm: Rf = Rg = 100 (by construction)") {
        // CIE 224:2017, 4.3: below 4000 K the reference is Planck; the 5 nm samples of Planck's law
        // computed at 5 nm give zero differences.
        for (double t : {2700.0, 3500.0}) {
            CAPTURE(t);
            const Spectrum p = planckian(t);
            const auto f = colour_fidelity(p, cct_of(p).cct_K, 5);
            CHECK(f.interval_nm == 5);
            CHECK(std::abs(f.rf - 100) <= 1e-3);
            CHECK(std::abs(f.rg - 100) <= 1e-3);
        }
    }
    SUBCASE("FL1, FL2 at 5 nm, as tabulated, and against the 1 nm route") {
        // The CIE 15 tables are given at 5 nm, so CIE 224 may be computed on them as they stand.
        // Published: FL2 Rf 70.12 (colour-science documentation, colour_fidelity_index_ANSIIESTM3018
        // example on SDS_ILLUMINANTS["FL2"], colour.readthedocs.io v0.4.3); CIE 224 calculator FL1
        // Rf 80.6, FL2 Rf 70.1 (from memory). Both routes round to the published 0.1.
        for (int n : {1, 2}) {
            CAPTURE(n);
            const SampledSpectrum table = cie_fl_table(n);
            REQUIRE(cie224_interval_for(table.wavelengths_nm) == 5);
            const Spectrum one = resample_to_1nm(table);
            const double cct = cct_of(one).cct_K;
            const auto at5 = colour_fidelity(one, cct, 5), at1 = colour_fidelity(one, cct, 1);
            MESSAGE("FL" << n << " Rf at 5 nm " << at5.rf << ", at 1 nm " << at1.rf << "; Rg " << at5.rg << ", " << at1.rg);
            CHECK(std::abs(at5.rf - at1.rf) <= 0.3);  // two quadratures of one smooth-sampled table (common practice, no source)
            if (n == 2) CHECK(std::abs(at5.rf - 70.12) <= 0.05);  // colour-science documentation example
            CHECK(std::abs(at5.rf - (n == 1 ? 80.6 : 70.1)) <= 0.1);  // CIE 224 calculator, from memory
        }
    }
    SUBCASE("assess_sampled picks the interval from the data and says so") {
        const Assessment a = assess_sampled(cie_fl_table(2));
        REQUIRE(a.fidelity);
        CHECK(a.fidelity->interval_nm == 5);
        const Assessment b = assess(cie_fl_illuminant(2));
        REQUIRE(b.fidelity);
        CHECK(b.fidelity->interval_nm == 1);
        // The chromaticity, CCT and Ra do not depend on it: the same 1 nm spectrum.
        CHECK(a.xy.x == b.xy.x);
        CHECK(a.cct.cct_K == b.cct.cct_K);
    }
}
