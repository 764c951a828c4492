#include "lampwright/colour/ciecam02.hpp"

#include "lampwright/core/error.hpp"

#include <array>
#include <cmath>
#include <numbers>

namespace lampwright {

namespace {

// CIE 159:2004 eq. 8: the CAT02 chromatic adaptation matrix.
constexpr double kCat02[3][3] = {{0.7328, 0.4296, -0.1624}, {-0.7036, 1.6975, 0.0061}, {0.0030, 0.0136, 0.9834}};
// CIE 159:2004 eq. 11: the Hunt-Pointer-Estevez matrix (cone fundamentals, equal-energy normalised).
constexpr double kHpe[3][3] = {{0.38971, 0.68898, -0.07868}, {-0.22981, 1.18340, 0.04641}, {0.0, 0.0, 1.0}};

using Matrix = std::array<std::array<double, 3>, 3>;

Matrix inverse(const double (&m)[3][3]) {
    const double det = m[0][0] * (m[1][1] * m[2][2] - m[1][2] * m[2][1]) - m[0][1] * (m[1][0] * m[2][2] - m[1][2] * m[2][0]) +
                       m[0][2] * (m[1][0] * m[2][1] - m[1][1] * m[2][0]);
    Matrix r;
    r[0][0] = (m[1][1] * m[2][2] - m[1][2] * m[2][1]) / det;
    r[0][1] = (m[0][2] * m[2][1] - m[0][1] * m[2][2]) / det;
    r[0][2] = (m[0][1] * m[1][2] - m[0][2] * m[1][1]) / det;
    r[1][0] = (m[1][2] * m[2][0] - m[1][0] * m[2][2]) / det;
    r[1][1] = (m[0][0] * m[2][2] - m[0][2] * m[2][0]) / det;
    r[1][2] = (m[0][2] * m[1][0] - m[0][0] * m[1][2]) / det;
    r[2][0] = (m[1][0] * m[2][1] - m[1][1] * m[2][0]) / det;
    r[2][1] = (m[0][1] * m[2][0] - m[0][0] * m[2][1]) / det;
    r[2][2] = (m[0][0] * m[1][1] - m[0][1] * m[1][0]) / det;
    return r;
}

// M_HPE M_CAT02^-1 (CIE 159:2004 eq. 10-11, the inverse taken exactly rather than from its printed
// 6-decimal form), applied to the adapted R_c G_c B_c.
const Matrix& hpe_from_cat02() {
    static const Matrix m = [] {
        const Matrix inv = inverse(kCat02);
        Matrix r{};
        for (int i = 0; i < 3; ++i)
            for (int j = 0; j < 3; ++j)
                for (int k = 0; k < 3; ++k) r[i][j] += kHpe[i][k] * inv[k][j];
        return r;
    }();
    return m;
}

// CIE 159:2004 eq. 13: post-adaptation non-linear response compression (odd in R').
double compress(double fl, double v) {
    const double t = std::pow(fl * std::fabs(v) / 100.0, 0.42);
    return std::copysign(400.0 * t / (t + 27.13), v) + 0.1;
}

constexpr double kUcsC1 = 0.007, kUcsC2 = 0.0228;  // Luo, Cui and Li 2006, Table 2 (CAM02-UCS)

double ucs_lightness(double j) { return (1 + 100 * kUcsC1) * j / (1 + kUcsC1 * j); }
double ucs_colourfulness(double m) { return std::log1p(kUcsC2 * m) / kUcsC2; }

}  // namespace

Ciecam02::Ciecam02(const XYZ& white, const Ciecam02ViewingConditions& vc) {
    const double la = vc.adapting_luminance_cd_m2;
    if (!(la > 0) || !(vc.background_y > 0) || !(white.Y > 0)) throw Error("CIECAM02 needs L_A > 0, Y_b > 0 and a white with Y > 0");
    // CIE 159:2004 eq. 7; D = 1 when the illuminant is discounted.
    const double d = vc.degree_of_adaptation ? *vc.degree_of_adaptation : vc.f * (1 - std::exp((-la - 42) / 92) / 3.6);
    const double xyz_w[3] = {white.X, white.Y, white.Z};
    for (int i = 0; i < 3; ++i) {
        const double rw = kCat02[i][0] * xyz_w[0] + kCat02[i][1] * xyz_w[1] + kCat02[i][2] * xyz_w[2];
        d_rgb_[i] = white.Y * d / rw + 1 - d;  // CIE 159:2004 eq. 9
    }
    // CIE 159:2004 eqs. 2-6: F_L, n, N_bb = N_cb, z.
    const double k = 1 / (5 * la + 1), k4 = k * k * k * k;
    fl_ = 0.2 * k4 * (5 * la) + 0.1 * (1 - k4) * (1 - k4) * std::cbrt(5 * la);
    n_ = vc.background_y / white.Y;
    nbb_ = 0.725 * std::pow(1 / n_, 0.2);
    z_ = 1.48 + std::sqrt(n_);
    c_ = vc.c;
    nc_ = vc.nc;
    fl_quarter_ = std::pow(fl_, 0.25);
    chroma_factor_ = std::pow(1.64 - std::pow(0.29, n_), 0.73);
    const Adapted w = adapt(white);
    aw_ = (2 * w.ra + w.ga + w.ba / 20 - 0.305) * nbb_;  // CIE 159:2004 eq. 16 for the white
}

Ciecam02::Adapted Ciecam02::adapt(const XYZ& s) const {
    const double xyz[3] = {s.X, s.Y, s.Z};
    double rc[3];
    for (int i = 0; i < 3; ++i) rc[i] = d_rgb_[i] * (kCat02[i][0] * xyz[0] + kCat02[i][1] * xyz[1] + kCat02[i][2] * xyz[2]);
    const auto& m = hpe_from_cat02();
    double p[3];
    for (int i = 0; i < 3; ++i) p[i] = m[i][0] * rc[0] + m[i][1] * rc[1] + m[i][2] * rc[2];
    return {compress(fl_, p[0]), compress(fl_, p[1]), compress(fl_, p[2])};
}

Ciecam02Correlates Ciecam02::forward(const XYZ& sample) const {
    const Adapted r = adapt(sample);
    // CIE 159:2004 eqs. 14-15: opponent dimensions and hue angle.
    const double a = r.ra - 12 * r.ga / 11 + r.ba / 11;
    const double b = (r.ra + r.ga - 2 * r.ba) / 9;
    double h = std::atan2(b, a) * 180 / std::numbers::pi;
    if (h < 0) h += 360;
    // eq. 16-17: achromatic response and lightness.
    const double big_a = (2 * r.ra + r.ga + r.ba / 20 - 0.305) * nbb_;
    Ciecam02Correlates out;
    out.hue_angle_h = h;
    out.lightness_J = 100 * std::pow(big_a / aw_, c_ * z_);
    // eq. 18: brightness.
    out.brightness_Q = (4 / c_) * std::sqrt(out.lightness_J / 100) * (aw_ + 4) * fl_quarter_;
    // eqs. 19-21: eccentricity, t, chroma, colourfulness, saturation (N_cb = N_bb).
    const double et = 0.25 * (std::cos(h * std::numbers::pi / 180 + 2) + 3.8);
    const double t = (50000.0 / 13 * nc_ * nbb_ * et * std::hypot(a, b)) / (r.ra + r.ga + 21 * r.ba / 20);
    out.chroma_C = std::pow(t, 0.9) * std::sqrt(out.lightness_J / 100) * chroma_factor_;
    out.colourfulness_M = out.chroma_C * fl_quarter_;
    out.saturation_s = 100 * std::sqrt(out.colourfulness_M / out.brightness_Q);
    return out;
}

Jab Ciecam02::ucs(const XYZ& sample) const {
    const Adapted r = adapt(sample);
    const double a = r.ra - 12 * r.ga / 11 + r.ba / 11;
    const double b = (r.ra + r.ga - 2 * r.ba) / 9;
    const double big_a = (2 * r.ra + r.ga + r.ba / 20 - 0.305) * nbb_;
    const double j = 100 * std::pow(big_a / aw_, c_ * z_);
    const double ab = std::sqrt(a * a + b * b);  // not std::hypot: no overflow is possible here, and it is slow
    Jab out;
    out.j = ucs_lightness(j);
    if (!(ab > 0)) return out;  // achromatic: M = 0
    const double cos_h = a / ab, sin_h = b / ab;
    // cos(h + 2 rad) = cos h cos 2 - sin h sin 2 (CIE 159 eq. 19 without the angle itself).
    static const double cos2 = std::cos(2.0), sin2 = std::sin(2.0);
    const double et = 0.25 * (cos_h * cos2 - sin_h * sin2 + 3.8);
    const double t = (50000.0 / 13 * nc_ * nbb_ * et * ab) / (r.ra + r.ga + 21 * r.ba / 20);
    const double m = std::pow(t, 0.9) * std::sqrt(j / 100) * chroma_factor_ * fl_quarter_;
    const double mp = ucs_colourfulness(m);
    out.a = mp * cos_h;
    out.b = mp * sin_h;
    return out;
}

Jab cam02_ucs(const Ciecam02Correlates& c) {
    const double mp = ucs_colourfulness(c.colourfulness_M);
    const double h = c.hue_angle_h * std::numbers::pi / 180;
    return {ucs_lightness(c.lightness_J), mp * std::cos(h), mp * std::sin(h)};
}

double cam02_ucs_difference(const Jab& p, const Jab& q) {
    const double dj = p.j - q.j, da = p.a - q.a, db = p.b - q.b;
    return std::sqrt(dj * dj + da * da + db * db);
}

}  // namespace lampwright
