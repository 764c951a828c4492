// Resampling onto the 1 nm grid: Sprague (CIE 167:2005) for uniform data, monotone cubic Hermite
// (Fritsch & Carlson 1980) otherwise.
#include "lampwright/core/error.hpp"
#include "lampwright/core/interpolation.hpp"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <functional>
#include <utility>
#include <vector>

using namespace lampwright;

namespace {

std::vector<double> sample(const std::function<double(double)>& f, double x0, double step, int n) {
    std::vector<double> y;
    for (int i = 0; i < n; ++i) y.push_back(f(x0 + i * step));
    return y;
}

std::vector<double> grid(double from, double to, double step) {
    std::vector<double> x;
    for (double v = from; v <= to + 1e-9; v += step) x.push_back(v);
    return x;
}

}  // namespace

TEST_CASE("Sprague interpolation passes through the nodes") {
    // CIE 167:2005 eq. (3): a0 = f0, so the interpolant equals the data at every node.
    const std::vector<double> y{0.3, 1.7, 4.2, 3.9, 8.8, 2.1, 0.5, 6.6, 7.0, 1.2, 0.0, 3.3};
    const double x0 = 380, step = 5;
    const auto xs = grid(x0, x0 + step * static_cast<double>(y.size() - 1), step);
    const auto out = sprague_interpolate(x0, step, y, xs);
    REQUIRE(out.size() == y.size());  // precondition; common practice, no source
    for (std::size_t i = 0; i < y.size(); ++i) CHECK(out[i] == y[i]);  // CIE 167:2005 eq. (3), a0 = f0
}

TEST_CASE("Sprague interpolation reproduces polynomials of degree 0 to 4 in the interior") {
    // The coefficients of CIE 167:2005 eq. (3) take f' and f'' from 5-point central differences,
    // which are exact up to degree 4 (common practice, no source). Interior = every segment with
    // two real nodes on each side, i.e. no use of the end extrapolation of CIE 167:2005 Table 2.
    const double x0 = 380, step = 5;
    const int n = 20;
    for (int degree = 0; degree <= 4; ++degree) {
        CAPTURE(degree);
        auto f = [degree](double x) {
            const double t = (x - 420) / 50;
            return std::pow(t, degree) - 0.7 * std::pow(t, std::max(0, degree - 1)) + 0.2;
        };
        const auto y = sample(f, x0, step, n);
        const auto xs = grid(x0 + 2 * step, x0 + (n - 3) * step, 1.0);
        const auto out = sprague_interpolate(x0, step, y, xs);
        for (std::size_t k = 0; k < xs.size(); ++k) {
            CAPTURE(xs[k]);
            CHECK(std::abs(out[k] - f(xs[k])) <= 1e-12);  // exact up to rounding (common practice, no source)
        }
    }
}

TEST_CASE("Sprague interpolation of a quintic carries the known error term of its 5-point derivatives") {
    // CIE 167:2005 is sometimes quoted as exact for quintics; it is not. With unit node spacing and
    // f = x^5 (f5 = 120), the 5-point first derivative is off by -h^4 f5 / 30 = -4 while the
    // 5-point second derivative is exact, so on a segment [i, i+1] the interpolant is
    // x^5 + e(t), e(t) = -4t + 40t^3 - 60t^4 + 24t^5 (derived here from CIE 167:2005 eq. (3); no
    // further source). This pins every coefficient a1..a5 of eq. (3).
    const auto y = sample([](double x) { return std::pow(x, 5); }, 0, 1, 12);
    std::vector<double> xs;
    for (int seg = 2; seg <= 8; ++seg)
        for (double t = 0.1; t < 0.95; t += 0.1) xs.push_back(seg + t);
    const auto out = sprague_interpolate(0, 1, y, xs);
    for (std::size_t k = 0; k < xs.size(); ++k) {
        const double t = xs[k] - std::floor(xs[k]);
        const double e = -4 * t + 40 * t * t * t - 60 * t * t * t * t + 24 * std::pow(t, 5);
        CAPTURE(xs[k]);
        CHECK(std::abs(out[k] - (std::pow(xs[k], 5) + e)) <= 1e-9 * std::pow(xs[k], 5));  // derived, see above
    }
}

TEST_CASE("Sprague interpolation with the CIE 167 end formulae is exact on linear data over the whole range") {
    // The end extrapolation of CIE 167:2005 Table 2 has weights summing to 209/209 and first
    // moment -2 (resp. -1): it reproduces straight lines (checked by hand from Table 2; common practice, no source).
    const double x0 = 360, step = 5;
    auto f = [](double x) { return 0.25 * x - 40; };
    const auto y = sample(f, x0, step, 12);
    const auto xs = grid(x0, x0 + 11 * step, 1.0);
    const auto out = sprague_interpolate(x0, step, y, xs);
    for (std::size_t k = 0; k < xs.size(); ++k) {
        CAPTURE(xs[k]);
        CHECK(std::abs(out[k] - f(xs[k])) <= 1e-12);  // CIE 167:2005 Table 2 (linear exactness)
    }
}

TEST_CASE("Sprague interpolation refuses fewer than 6 points") {
    // CIE 167:2005: the formula needs six nodes (two either side plus the segment).
    CHECK_THROWS_AS(sprague_interpolate(0, 1, {1, 2, 3, 4, 5}, {0.5}), Error);  // CIE 167:2005 (six-point formula)
}

TEST_CASE("pchip interpolation passes through the nodes and is exact on linear data") {
    // Fritsch & Carlson 1980 (SIAM J. Numer. Anal. 17): a cubic Hermite interpolant; on collinear
    // data every slope equals the line's, so the line is reproduced.
    const std::vector<double> x{380, 383, 391, 400, 412, 413, 450, 600, 781};
    std::vector<double> y;
    for (double v : x) y.push_back(3.5 - 0.01 * v);
    const auto at_nodes = pchip_interpolate(x, y, x);
    for (std::size_t i = 0; i < x.size(); ++i) CHECK(std::abs(at_nodes[i] - y[i]) <= 1e-13);  // Fritsch & Carlson 1980
    const auto xs = grid(380, 781, 0.5);
    const auto out = pchip_interpolate(x, y, xs);
    for (std::size_t k = 0; k < xs.size(); ++k) {
        CAPTURE(xs[k]);
        CHECK(std::abs(out[k] - (3.5 - 0.01 * xs[k])) <= 1e-12);  // Fritsch & Carlson 1980
    }
}

TEST_CASE("pchip interpolation is monotone on monotone data and does not overshoot") {
    // Fritsch & Carlson 1980: with their slope limits the interpolant is monotone wherever the data
    // are, and stays within the range of the two nodes of each interval.
    const std::vector<double> x{400, 401, 405, 420, 421, 430, 460, 470, 520, 700};
    const std::vector<double> rising{0, 0, 0.01, 0.02, 5, 5.1, 5.1, 9, 9, 10};
    const std::vector<double> falling{10, 9.5, 9.4, 2, 1.9, 1.9, 0.5, 0.5, 0.1, 0};
    for (const auto* y : {&rising, &falling}) {
        const auto xs = grid(400, 700, 0.25);
        const auto out = pchip_interpolate(x, *y, xs);
        const double sign = y == &rising ? 1.0 : -1.0;
        for (std::size_t k = 1; k < xs.size(); ++k) {
            CAPTURE(xs[k]);
            CHECK(sign * (out[k] - out[k - 1]) >= -1e-12);  // Fritsch & Carlson 1980: monotone
        }
        for (std::size_t k = 0; k < xs.size(); ++k) {
            const auto i = std::min<std::size_t>(
                static_cast<std::size_t>(std::upper_bound(x.begin(), x.end(), xs[k]) - x.begin()), x.size() - 1);
            const std::size_t lo = i == 0 ? 0 : i - 1;
            const double a = std::min((*y)[lo], (*y)[i]), b = std::max((*y)[lo], (*y)[i]);
            CAPTURE(xs[k]);
            CHECK(out[k] >= a - 1e-12);  // Fritsch & Carlson 1980: no overshoot
            CHECK(out[k] <= b + 1e-12);  // Fritsch & Carlson 1980: no overshoot
        }
    }
}

TEST_CASE("resample_to_1nm uses Sprague on uniform data and pchip on non-uniform data") {
    // Uniform 5 nm data of a quartic: Sprague reproduces it in the interior (see above).
    auto quartic = [](double x) { const double t = (x - 560) / 100; return 2 + t - t * t + 0.5 * t * t * t * t; };
    SampledSpectrum u{"u", {}, {}};
    for (int nm = 380; nm <= 780; nm += 5) {
        u.wavelengths_nm.push_back(nm);
        u.values.push_back(quartic(nm));
    }
    const Spectrum su = resample_to_1nm(u);
    CHECK(su.first_nm == 380);  // grid ceil(first)..floor(last); common practice, no source
    CHECK(su.last_nm() == 780);  // common practice, no source
    for (int nm = 390; nm <= 770; ++nm) CHECK(std::abs(su.values[nm - 380] - quartic(nm)) <= 1e-12);  // CIE 167:2005

    // Non-uniform data with a step: pchip keeps it within [0, 1] (a Sprague or spline fit would ring).
    SampledSpectrum s{"s", {379.5, 385, 390, 400, 402, 404, 500, 600, 700, 780.5}, {0, 0, 0, 0, 1, 1, 1, 1, 1, 1}};
    const Spectrum ss = resample_to_1nm(s);
    CHECK(ss.first_nm == 380);  // ceil(379.5), common practice, no source
    CHECK(ss.last_nm() == 780);  // floor(780.5)
    for (double v : ss.values) {
        CHECK(v >= -1e-12);  // Fritsch & Carlson 1980: no overshoot
        CHECK(v <= 1 + 1e-12);  // Fritsch & Carlson 1980: no overshoot
    }
    for (std::size_t i = 1; i < ss.values.size(); ++i) CHECK(ss.values[i] >= ss.values[i - 1] - 1e-12);  // Fritsch & Carlson 1980: monotone
}

TEST_CASE("is_uniformly_spaced and interpolate_linear") {
    CHECK(is_uniformly_spaced({380, 385, 390, 395}));  // common practice, no source
    CHECK_FALSE(is_uniformly_spaced({380, 385, 391, 395}));  // common practice, no source
    CHECK_FALSE(is_uniformly_spaced({380}));  // common practice, no source
    const std::vector<double> x{1, 2, 4}, y{10, 20, 0};
    CHECK(interpolate_linear(x, y, 1.5) == doctest::Approx(15).epsilon(1e-15));  // linear interpolation, common practice, no source
    CHECK(interpolate_linear(x, y, 3) == doctest::Approx(10).epsilon(1e-15));  // common practice, no source
    CHECK(interpolate_linear(x, y, 0) == 10);  // clamps to the end values
    CHECK(interpolate_linear(x, y, 9) == 0);  // common practice, no source
}

TEST_CASE("resample_to_1nm: wavelengths beyond 100-100,000 nm or not finite are an Error, never a huge grid or an int overflow") {
    // 3e9 nm does not fit an int (undefined behaviour when converted); 1e6 nm would be a
    // million-point grid; NaN has no grid at all.
    for (const double far : {3e9, 1e6, 100000.5, static_cast<double>(NAN), static_cast<double>(INFINITY)}) {
        CAPTURE(far);
        const SampledSpectrum s{"far", {380, 500, far}, {1, 1, 1}};
        CHECK_THROWS_AS((void)resample_to_1nm(s), Error);
    }
    const SampledSpectrum below{"below", {-3e9, 380, 780}, {1, 1, 1}};
    CHECK_THROWS_AS((void)resample_to_1nm(below), Error);
    // The limits themselves are resampled: 99,901 grid points from 100 to 100,000 nm.
    const SampledSpectrum edges{"edges", {100, 500, 100000}, {1, 1, 1}};
    const Spectrum r = resample_to_1nm(edges);
    CHECK(r.first_nm == 100);
    CHECK(r.values.size() == 99901);
    CHECK(r.values.back() == doctest::Approx(1.0));
}

TEST_CASE("resample_to_1nm: huge finite values (1e306 to 1e308) resample to finite values in proportion, never inf or NaN") {
    // Sprague's end extension multiplies values by up to 3033/209 and pchip divides differences by
    // steps under 1 nm: unscaled, values near 1.8e308 overflow. Interpolation is linear in the
    // values, so the result must be the scale times the result for the shape alone.
    auto shape = [](double nm) { return std::exp(-0.5 * std::pow((nm - 550) / 30, 2)) + 0.3 * std::exp(-0.5 * std::pow((nm - 450) / 8, 2)) + 0.01; };
    for (const bool uniform : {true, false}) {
        SampledSpectrum unit{"unit", {}, {}};
        for (double nm = 380; nm <= 780; nm += uniform ? 5.0 : (nm < 500 ? 0.5 : 7.0)) {
            unit.wavelengths_nm.push_back(nm);
            unit.values.push_back(shape(nm));
        }
        const Spectrum ref = resample_to_1nm(unit);
        for (const double scale : {1e306, 1e307, 1e308}) {
            CAPTURE(uniform);
            CAPTURE(scale);
            SampledSpectrum big = unit;
            for (double& v : big.values) v *= scale;
            const Spectrum r = resample_to_1nm(big);
            REQUIRE(r.values.size() == ref.values.size());
            bool all_finite = true;
            double worst = 0;
            for (std::size_t i = 0; i < r.values.size(); ++i) {
                all_finite = all_finite && std::isfinite(r.values[i]);
                worst = std::max(worst, std::abs(r.values[i] / scale - ref.values[i]) / ref.values[i]);
            }
            CHECK(all_finite);
            CHECK(worst < 1e-12);
        }
    }
    // Values whose interpolation truly exceeds the largest double (a step at DBL_MAX overshoots)
    // are an Error naming the spectrum, never inf.
    SampledSpectrum edge{"edge", {}, {}};
    for (int nm = 380; nm <= 780; nm += 5) {
        edge.wavelengths_nm.push_back(nm);
        edge.values.push_back(nm < 580 ? 0.0 : std::numeric_limits<double>::max());
    }
    CHECK_THROWS_WITH_AS((void)resample_to_1nm(edge), doctest::Contains("edge"), Error);
}

TEST_CASE("resample_to_1nm: a spectrum already on the whole-nm grid comes back unchanged, bit for bit") {
    // Sprague (CIE 167:2005) and pchip both pass through their nodes, so the 1 nm values of a
    // 1 nm table are the table's own (common practice, no source): they are copied, not recomputed.
    SampledSpectrum s;
    s.name = "on grid";
    for (int nm = 380; nm <= 780; ++nm) {
        s.wavelengths_nm.push_back(nm);
        s.values.push_back(1.0 + 0.3 * std::sin(nm / 7.0) + 1e-13 * nm);
    }
    const Spectrum r = resample_to_1nm(s);
    CHECK(r.first_nm == 380);
    CHECK(r.values == s.values);
    // Off the grid by half a nanometre it is interpolated (and the node values differ from the copy).
    for (double& w : s.wavelengths_nm) w += 0.5;
    const Spectrum shifted = resample_to_1nm(s);
    CHECK(shifted.first_nm == 381);
    CHECK(shifted.values.size() == 400);
}

TEST_CASE("resample_to_1nm on a whole-number step (the weights computed once per position) reproduces a quartic to 1e-12") {
    // CIE 167:2005: the Sprague quintic reproduces polynomials up to degree 4 in the interior;
    // with 5 nm and 10 nm steps every 1 nm output goes through the per-position weights.
    for (double step : {5.0, 10.0}) {
        SampledSpectrum s;
        s.name = "quartic";
        const auto f = [](double nm) { const double t = (nm - 550) / 100; return 1 + t + 0.5 * t * t - 0.3 * t * t * t + 0.2 * t * t * t * t; };
        for (double nm = 380; nm <= 780 + 1e-9; nm += step) s.wavelengths_nm.push_back(nm), s.values.push_back(f(nm));
        const Spectrum r = resample_to_1nm(s);
        REQUIRE(r.first_nm == 380);
        REQUIRE(r.values.size() == 401);
        double worst = 0;
        for (int nm = 380 + 2 * static_cast<int>(step); nm <= 780 - 2 * static_cast<int>(step); ++nm)
            worst = std::max(worst, std::abs(r.values[static_cast<std::size_t>(nm - 380)] - f(nm)));
        CHECK(worst < 1e-12);
    }
}

TEST_CASE("resample_to_1nm of a spectrum taken over (&&): 1 nm values moved, not copied; others resampled as by the copying one") {
    // Common practice, no source: interpolants pass through their data points.
    SampledSpectrum s;
    s.name = "on grid";
    for (int nm = 400; nm <= 700; ++nm) s.wavelengths_nm.push_back(nm), s.values.push_back(std::sin(nm / 37.0) + 2);
    const std::vector<double> expected = s.values;
    const double* data = s.values.data();
    const Spectrum r = resample_to_1nm(std::move(s));
    CHECK(r.first_nm == 400);
    CHECK(r.values == expected);
    CHECK(r.values.data() == data);  // the same buffer
    CHECK(r.name == "on grid");
    SampledSpectrum coarse;
    for (int nm = 400; nm <= 700; nm += 5) coarse.wavelengths_nm.push_back(nm), coarse.values.push_back(std::sin(nm / 37.0) + 2);
    SampledSpectrum moved = coarse;
    CHECK(resample_to_1nm(std::move(moved)).values == resample_to_1nm(coarse).values);
}
