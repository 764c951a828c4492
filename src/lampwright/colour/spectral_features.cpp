#include "lampwright/colour/spectral_features.hpp"

#include "lampwright/colour/cie_tables.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <optional>
#include <vector>

namespace lampwright {

namespace {

constexpr int kLocusFirstNm = 380, kLocusLastNm = 780;

const std::vector<Chromaticity>& spectrum_locus() {
    static const std::vector<Chromaticity> locus = [] {
        const auto& cmf = colour_matching_functions(Observer::cie1931_2deg);
        std::vector<Chromaticity> l;
        for (int nm = kLocusFirstNm; nm <= kLocusLastNm; ++nm) {
            const int j = nm - kColourFirstNm;
            l.push_back(chromaticity({cmf.xyz[0][j], cmf.xyz[1][j], cmf.xyz[2][j]}));
        }
        return l;
    }();
    return locus;
}

// Parameter t > 0 along the ray w + t d where it crosses segment a-b, and the position s on a-b.
std::optional<std::pair<double, double>> ray_hits(const Chromaticity& w, double dx, double dy, const Chromaticity& a,
                                                  const Chromaticity& b) {
    const double ex = b.x - a.x, ey = b.y - a.y;
    const double den = dx * ey - dy * ex;
    if (std::abs(den) < 1e-15) return std::nullopt;
    const double t = ((a.x - w.x) * ey - (a.y - w.y) * ex) / den;
    const double s = ((a.x - w.x) * dy - (a.y - w.y) * dx) / den;
    if (t <= 0 || s < 0 || s > 1) return std::nullopt;
    return std::make_pair(t, s);
}

std::optional<std::pair<double, double>> locus_hit(const Chromaticity& w, double dx, double dy) {
    // Only segments whose ends lie on opposite sides of the ray's line can be crossed.
    const auto& l = spectrum_locus();
    double side_prev = dx * (l[0].y - w.y) - dy * (l[0].x - w.x);
    for (std::size_t i = 0; i + 1 < l.size(); ++i) {
        const double side = dx * (l[i + 1].y - w.y) - dy * (l[i + 1].x - w.x);
        if ((side_prev <= 0) != (side <= 0))
            if (auto h = ray_hits(w, dx, dy, l[i], l[i + 1]))
                return std::make_pair(h->first, kLocusFirstNm + static_cast<double>(i) + h->second);
        side_prev = side;
    }
    return std::nullopt;
}

}  // namespace

void dominant_wavelength(const Chromaticity& xy, const Chromaticity& white, double& wavelength_nm, double& purity) {
    const double dx = xy.x - white.x, dy = xy.y - white.y;
    const double dist = std::hypot(dx, dy);
    if (dist < 1e-12) {
        wavelength_nm = std::numeric_limits<double>::quiet_NaN();
        purity = 0;
        return;
    }
    if (auto h = locus_hit(white, dx, dy)) {
        wavelength_nm = h->second;
        purity = 1.0 / h->first;  // |S - W| / |P - W| with the ray scaled so that t = 1 at S
        return;
    }
    const auto& l = spectrum_locus();
    const auto comp = locus_hit(white, -dx, -dy);
    const auto purple = ray_hits(white, dx, dy, l.front(), l.back());
    wavelength_nm = comp ? -comp->second : std::numeric_limits<double>::quiet_NaN();
    purity = purple ? 1.0 / purple->first : std::numeric_limits<double>::quiet_NaN();
}

SpectralFeatures spectral_features(const Spectrum& s, const Chromaticity& xy_2deg) {
    SpectralFeatures f;
    const auto& v = s.values;
    const auto n = v.size();
    const std::size_t ip = static_cast<std::size_t>(std::max_element(v.begin(), v.end()) - v.begin());
    f.peak_nm = s.first_nm + static_cast<double>(ip);
    if (ip > 0 && ip + 1 < n) {
        const double den = v[ip - 1] - 2 * v[ip] + v[ip + 1];
        if (den < 0) f.peak_nm += 0.5 * (v[ip - 1] - v[ip + 1]) / den;
    }
    double sw = 0, swl = 0;
    for (std::size_t i = 0; i < n; ++i) {
        sw += v[i];
        swl += v[i] * (s.first_nm + static_cast<double>(i));
    }
    f.centroid_nm = swl / sw;

    const double half = 0.5 * v[ip];
    std::optional<double> left, right;
    for (std::size_t i = ip; i > 0; --i)
        if (v[i - 1] < half) {
            left = s.first_nm + (static_cast<double>(i) - 1) + (half - v[i - 1]) / (v[i] - v[i - 1]);
            break;
        }
    for (std::size_t i = ip; i + 1 < n; ++i)
        if (v[i + 1] < half) {
            right = s.first_nm + static_cast<double>(i) + (v[i] - half) / (v[i] - v[i + 1]);
            break;
        }
    f.fwhm_nm = (left && right) ? *right - *left : std::numeric_limits<double>::quiet_NaN();

    dominant_wavelength(xy_2deg, {1.0 / 3.0, 1.0 / 3.0}, f.dominant_nm, f.purity);
    return f;
}

}  // namespace lampwright
