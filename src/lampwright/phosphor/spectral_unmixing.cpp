#include "lampwright/phosphor/spectral_unmixing.hpp"

#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/core/bandpass.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/core/interpolation.hpp"
#include "lampwright/core/nonnegative_least_squares.hpp"

#include <fmt/format.h>

#include <cmath>

namespace lampwright {

namespace {

// Weight of the chromaticity rows against the spectral rows: large enough that x, y agree to
// about 1e-7, small enough for the QR to stay well conditioned (checked in tests).
constexpr double kChromaticityRowWeight = 1e4;

struct Grid {
    std::vector<int> nm;
    int step = 0;
};

Grid measurement_grid(const SampledSpectrum& m) {
    if (m.wavelengths_nm.size() < 3) throw Error(fmt::format("spectrum '{}': too few points to unmix", m.name));
    Grid g;
    for (double w : m.wavelengths_nm) {
        if (std::abs(w - std::round(w)) > 1e-9 || w < kEmissionFirstNm || w > kEmissionLastNm)
            throw Error(fmt::format("spectrum '{}': unmixing needs whole-nm wavelengths within {}-{} nm ({:g} nm is not)", m.name,
                                    kEmissionFirstNm, kEmissionLastNm, w));
        g.nm.push_back(static_cast<int>(std::lround(w)));
    }
    g.step = g.nm[1] - g.nm[0];
    for (std::size_t i = 1; i < g.nm.size(); ++i)
        if (g.nm[i] - g.nm[i - 1] != g.step) throw Error(fmt::format("spectrum '{}': unmixing needs a uniform wavelength step", m.name));
    return g;
}

// A model spectrum as the instrument reports it at the measurement's wavelengths.
std::vector<double> as_measured(const Spectrum& one_nm, const Grid& g, int bandwidth) {
    return values_at(triangular_bandpass(one_nm, bandwidth), g.nm);
}

// x, y of a column as the measurement's own x, y are computed (its table resampled to 1 nm).
XYZ column_tristimulus(const std::vector<double>& values, const SampledSpectrum& m) {
    return tristimulus(resample_to_1nm(SampledSpectrum{m.name, m.wavelengths_nm, values}));
}

}  // namespace

UnmixingResult unmix_spectrum(const SampledSpectrum& m, const std::vector<Phosphor>& candidates, const UnmixingOptions& o) {
    const Grid g = measurement_grid(m);
    const int bandwidth = o.bandwidth_nm > 0 ? o.bandwidth_nm : g.step;
    std::vector<Spectrum> basis;
    for (const auto& p : candidates) basis.push_back(power_from_photons(emission_photons(p)));
    if (o.mercury_lines)
        for (std::size_t k = 0; k < kMercuryLineGroupsNm.size(); ++k) basis.push_back(mercury_line_group(k));
    if (basis.empty()) throw Error(fmt::format("spectrum '{}': nothing to unmix it into", m.name));

    std::vector<std::size_t> rows;  // the 380-780 nm points
    for (std::size_t i = 0; i < g.nm.size(); ++i)
        if (g.nm[i] >= 380 && g.nm[i] <= 780) rows.push_back(i);
    if (rows.size() < 3) throw Error(fmt::format("spectrum '{}': too few points within 380-780 nm", m.name));

    const auto n_extra = o.match_chromaticity ? 2 : 0;
    Eigen::MatrixXd a(static_cast<Eigen::Index>(rows.size()) + n_extra, static_cast<Eigen::Index>(basis.size()));
    Eigen::VectorXd b = Eigen::VectorXd::Zero(a.rows());
    for (std::size_t r = 0; r < rows.size(); ++r) b(static_cast<Eigen::Index>(r)) = m.values[rows[r]];
    const double b_norm = b.norm();
    if (!(b_norm > 0)) throw Error(fmt::format("spectrum '{}' has no power within 380-780 nm", m.name));
    const XYZ t = tristimulus(resample_to_1nm(m));
    std::vector<std::vector<double>> columns;
    for (std::size_t j = 0; j < basis.size(); ++j) {
        columns.push_back(as_measured(basis[j], g, bandwidth));
        const auto& col = columns.back();
        Eigen::Index r = 0;
        for (std::size_t i : rows) a(r++, static_cast<Eigen::Index>(j)) = col[i];
        if (o.match_chromaticity) {
            const XYZ c = column_tristimulus(col, m);
            const double scale = kChromaticityRowWeight * b_norm / t.Y;
            a(r, static_cast<Eigen::Index>(j)) = scale * (c.X - t.X / t.Y * c.Y);
            a(r + 1, static_cast<Eigen::Index>(j)) = scale * (c.Z - t.Z / t.Y * c.Y);
        }
    }
    const NnlsResult fit = nonnegative_least_squares(a, b);

    UnmixingResult res;
    res.model_1nm = emission_grid(m.name + " (model)");
    res.reconstruction = SampledSpectrum{m.name + " (model)", m.wavelengths_nm, std::vector<double>(g.nm.size(), 0.0)};
    double hg_visible = 0;
    for (std::size_t j = 0; j < basis.size(); ++j) {
        const double x = fit.x(static_cast<Eigen::Index>(j));
        if (j < candidates.size()) res.power.push_back(x);
        else res.mercury_power[j - candidates.size()] = x, hg_visible += x * visible_power(basis[j]);
        for (std::size_t k = 0; k < res.model_1nm.values.size(); ++k) res.model_1nm.values[k] += x * basis[j].values[k];
        for (std::size_t i = 0; i < g.nm.size(); ++i) res.reconstruction.values[i] += x * columns[j][i];
    }
    const double visible = visible_power(res.model_1nm);
    res.mercury_visible_fraction = visible > 0 ? hg_visible / visible : 0;
    double d2 = 0;
    for (std::size_t i : rows) d2 += std::pow(res.reconstruction.values[i] - m.values[i], 2);
    res.relative_residual = std::sqrt(d2) / b_norm;
    return res;
}

}  // namespace lampwright
