#include "lampwright/phosphor/spectral_unmixing.hpp"

#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/core/bandpass.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/core/interpolation.hpp"
#include "lampwright/core/nonnegative_least_squares.hpp"

#include <fmt/format.h>
#include <nlopt.hpp>

#include <algorithm>
#include <cmath>
#include <functional>

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
        if (g.nm[i] - g.nm[i - 1] != g.step)
            throw Error(fmt::format("spectrum '{}': unmixing needs a uniform wavelength step ({} nm from {} nm, then {} to {} nm)", m.name, g.step,
                                    g.nm[0], g.nm[i - 1], g.nm[i]));
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

// ---------------------------------------------------------------------------------------------
// The inverse of the blend model.

namespace {

// A relative residual below this counts as this (BIC only): a printed table carries about six
// significant digits, so smaller residuals are round-off and must not decide between subsets.
constexpr double kResidualFloor = 1e-6;
// An objective for shifts the Stokes rule refuses (finite: BOBYQA needs numbers).
constexpr double kRefusedShift = 1e10;

// One measured spectrum, ready for the fits: its grid, bandpass and the 380-780 nm values scaled
// to unit L2 norm (the fit is scale-free; the scale keeps the solver's tolerances meaningful).
struct Prepared {
    Grid grid;
    int bandwidth = 1;
    std::vector<std::size_t> rows;
    Eigen::VectorXd b;
    double b_norm = 0;
};

Prepared prepare(const SampledSpectrum& m, int bandwidth_nm) {
    Prepared p;
    p.grid = measurement_grid(m);
    p.bandwidth = bandwidth_nm > 0 ? bandwidth_nm : p.grid.step;
    for (std::size_t i = 0; i < p.grid.nm.size(); ++i)
        if (p.grid.nm[i] >= 380 && p.grid.nm[i] <= 780) p.rows.push_back(i);
    if (p.rows.size() < 3) throw Error(fmt::format("spectrum '{}': too few points within 380-780 nm", m.name));
    p.b.resize(static_cast<Eigen::Index>(p.rows.size()));
    for (std::size_t r = 0; r < p.rows.size(); ++r) p.b(static_cast<Eigen::Index>(r)) = m.values[p.rows[r]];
    p.b_norm = p.b.norm();
    if (!(p.b_norm > 0) || !std::isfinite(p.b_norm)) throw Error(fmt::format("spectrum '{}' has no power within 380-780 nm", m.name));
    p.b /= p.b_norm;
    return p;
}

// A model spectrum of unit radiant power on the emission grid and its values as measured.
struct Column {
    Spectrum one_nm;
    std::vector<double> measured;  // at every measured wavelength
};

Column make_column(Spectrum unit_power, const Prepared& p) {
    Column c;
    c.measured = as_measured(unit_power, p.grid, p.bandwidth);
    c.one_nm = std::move(unit_power);
    return c;
}

Spectrum normalised_power(Spectrum s) {
    const double total = integrate_1nm(s.values);
    if (!(total > 0)) throw Error(fmt::format("'{}' has no power on the emission grid", s.name));
    for (double& v : s.values) v /= total;
    return s;
}

// A component's emission as power of unit total: the photon distribution the forward model uses
// (emission_for_excitation: Stokes check, no photons above the exciting energy), P(l) ~ N(l) / l.
Spectrum component_power(const Phosphor& ph, const std::string& label, const Excitation& e, double shift_nm, double width_scale = 1.0) {
    const Spectrum n = emission_for_excitation(ph, e, shift_nm, width_scale);
    Spectrum pw = emission_grid(label);
    for (std::size_t k = 0; k < n.values.size(); ++k) pw.values[k] = n.values[k] / (n.first_nm + static_cast<double>(k));
    return normalised_power(std::move(pw));
}

// Photons per unit power, up to the constant h c: sum P(l) l.
double photons_per_power(const Spectrum& unit_power) {
    double q = 0;
    for (std::size_t k = 0; k < unit_power.values.size(); ++k) q += unit_power.values[k] * (unit_power.first_nm + static_cast<double>(k));
    return q;
}

// The discharge light's free amplitudes: the four visible mercury line groups (their ratios
// vary with lamp type, current and age, so each is free), or the LED pump band.
std::vector<Column> discharge_columns(const Excitation& e, const Prepared& p) {
    std::vector<Column> out;
    if (e.kind == Excitation::Kind::mercury) {
        for (std::size_t k = 0; k < kMercuryLineGroupsNm.size(); ++k) out.push_back(make_column(mercury_line_group(k), p));
    } else {
        out.push_back(make_column(normalised_power(power_from_photons(pump_photons(e))), p));
    }
    return out;
}

struct Solve {
    Eigen::MatrixXd a;  // the 380-780 nm rows of the columns
    Eigen::VectorXd x;  // amplitudes, for the scaled measurement
    double rss = 0;
};

Solve solve(const std::vector<const Column*>& cols, const Prepared& p) {
    Solve s;
    s.a.resize(static_cast<Eigen::Index>(p.rows.size()), static_cast<Eigen::Index>(cols.size()));
    for (std::size_t j = 0; j < cols.size(); ++j)
        for (std::size_t r = 0; r < p.rows.size(); ++r)
            s.a(static_cast<Eigen::Index>(r), static_cast<Eigen::Index>(j)) = cols[j]->measured[p.rows[r]];
    const NnlsResult fit = nonnegative_least_squares(s.a, p.b);
    s.x = fit.x;
    s.rss = fit.residual_norm * fit.residual_norm;
    return s;
}

double bic_of(double rss, std::size_t n, std::size_t parameters) {
    const double dn = static_cast<double>(n);
    return dn * std::log(std::max(rss, kResidualFloor * kResidualFloor) / dn) + static_cast<double>(parameters) * std::log(dn);
}

bool is_band_emitter(const Phosphor& ph) { return ph.emission_model == "bands"; }

// How a band emitter's model may move: peak shift and relative FWHM change.
struct BandFreedom {
    double shift_nm = 0, width_change = 0;
};

// The shifts and width changes of the band emitters that minimise the residual: BOBYQA (Powell
// 2009, NLopt) within +-max_shift and +-max_width_change, the amplitudes by NNLS at each trial.
std::vector<BandFreedom> search_band_freedom(const std::vector<BlendComponent>& comps, const std::vector<Column>& fixed,
                                             const std::vector<Column>& discharge, const Prepared& p, const BlendUnmixingOptions& o) {
    std::vector<std::size_t> band;
    for (std::size_t i = 0; i < comps.size(); ++i)
        if (is_band_emitter(comps[i].phosphor)) band.push_back(i);
    std::vector<BandFreedom> out(comps.size());
    const bool shift = o.max_shift_nm > 0, width = o.max_width_change > 0;
    if (band.empty() || (!shift && !width)) return out;
    // Parameters per band emitter: [shift][width change], scaled so that both span -1..1.
    const std::size_t per = (shift ? 1u : 0u) + (width ? 1u : 0u);
    auto freedom_of = [&](const std::vector<double>& z, std::size_t k) {
        BandFreedom f;
        std::size_t j = k * per;
        if (shift) f.shift_nm = z[j++] * o.max_shift_nm;
        if (width) f.width_change = z[j] * o.max_width_change;
        return f;
    };
    std::vector<Column> cols = fixed;
    const std::function<double(const std::vector<double>&)> rss_at = [&](const std::vector<double>& z) {
        try {
            for (std::size_t k = 0; k < band.size(); ++k) {
                const auto& c = comps[band[k]];
                const BandFreedom f = freedom_of(z, k);
                cols[band[k]] = make_column(component_power(c.phosphor, c.label, o.excitation, f.shift_nm, 1 + f.width_change), p);
            }
        } catch (const Error&) {
            return kRefusedShift;
        }
        std::vector<const Column*> all;
        for (const auto& c : cols) all.push_back(&c);
        for (const auto& c : discharge) all.push_back(&c);
        return solve(all, p).rss;
    };
    const auto n = static_cast<unsigned>(band.size() * per);
    nlopt::opt opt(nlopt::LN_BOBYQA, n);
    opt.set_lower_bounds(std::vector<double>(n, -1.0));
    opt.set_upper_bounds(std::vector<double>(n, 1.0));
    opt.set_xtol_abs(1e-4);
    opt.set_maxeval(static_cast<int>(200 * n));
    opt.set_initial_step(0.25);
    using Objective = std::function<double(const std::vector<double>&)>;
    struct Context {
        const Objective* f;
        std::size_t n;
    } ctx{&rss_at, n};
    opt.set_min_objective(
        [](unsigned, const double* z, double*, void* data) {
            const auto& c = *static_cast<const Context*>(data);
            return (*c.f)(std::vector<double>(z, z + c.n));
        },
        &ctx);
    std::vector<double> z(n, 0.0);
    double best = rss_at(z);
    std::vector<double> z0 = z;
    try {
        double value = 0;
        opt.optimize(z, value);
        if (value < best) z0 = z;
    } catch (const nlopt::roundoff_limited&) {
        if (rss_at(z) < best) z0 = z;
    }
    for (std::size_t k = 0; k < band.size(); ++k) out[band[k]] = freedom_of(z0, k);
    return out;
}

// The result for the components at the given shifts and widths: amplitudes, the model inverse, the
// covariance and the assessments.
BlendUnmixing finish(const SampledSpectrum& m, const Prepared& p, const std::vector<BlendComponent>& comps, const std::vector<BandFreedom>& freedom,
                     const BlendUnmixingOptions& o) {
    BlendInput in;
    in.name = m.name;
    in.excitation = o.excitation;
    in.components = comps;
    const BlendBasis basis = blend_basis(in);

    std::vector<Column> cols;
    for (std::size_t i = 0; i < comps.size(); ++i) cols.push_back(make_column(component_power(comps[i].phosphor, comps[i].label, o.excitation, freedom[i].shift_nm, 1 + freedom[i].width_change), p));
    const std::vector<Column> discharge = discharge_columns(o.excitation, p);
    std::vector<const Column*> all;
    for (const auto& c : cols) all.push_back(&c);
    for (const auto& c : discharge) all.push_back(&c);
    const Solve s = solve(all, p);

    BlendUnmixing r;
    r.name = m.name;
    r.excitation = o.excitation;
    r.points = static_cast<int>(p.rows.size());
    r.parameters = static_cast<int>(all.size());
    r.rss = s.rss;
    r.relative_residual = std::sqrt(s.rss);
    r.bic = bic_of(s.rss, p.rows.size(), all.size());
    r.notes = basis.notes;

    const std::size_t nc = comps.size();
    // Model inverse (README "Blend physics"): emitted photons_i = x_i q_i (q: photons per unit
    // power); absorbed share s_i ~ photons_i / QE_i; mass w_i ~ s_i / g_i.
    std::vector<double> photons(nc), absorbed(nc), mass(nc), coef(nc);
    double p_total = 0, n_total = 0, s_total = 0, w_total = 0;
    for (std::size_t i = 0; i < nc; ++i) {
        const double x = s.x(static_cast<Eigen::Index>(i));
        const double qe = basis.quantum_efficiency[i], g = basis.share_weight[i];
        if (!(qe > 0) || !(g > 0))
            throw Error(fmt::format("component '{}' {} under the {}: the forward model gives it no light, so no mass fraction follows",
                                    comps[i].label, !(qe > 0) ? "has no quantum efficiency" : "absorbs nothing", o.excitation.describe()));
        const double q = photons_per_power(cols[i].one_nm);
        coef[i] = q / (qe * g);
        photons[i] = x * q;
        absorbed[i] = photons[i] / qe;
        mass[i] = x * coef[i];
        p_total += x, n_total += photons[i], s_total += absorbed[i], w_total += mass[i];
    }
    if (!(w_total > 0))
        throw Error(fmt::format("spectrum '{}': none of the components contributes to the fit (all at zero)", m.name));

    // Covariance of the amplitudes on the active set (those above zero): cov = s^2 (A^T A)^-1,
    // s^2 = RSS / (n - p) (the linearised least-squares covariance, e.g. Lawson and Hanson 1974,
    // ch. 7), carried to the mass fractions by the delta method: dw_i/dx_j = c_j (d_ij - w_i) / U.
    std::vector<Eigen::Index> active;
    for (Eigen::Index j = 0; j < s.x.size(); ++j)
        if (s.x(j) > 0) active.push_back(j);
    const auto n_active = static_cast<Eigen::Index>(active.size());
    Eigen::MatrixXd cov;
    r.uncertainty = static_cast<Eigen::Index>(p.rows.size()) > n_active;
    if (r.uncertainty) {
        Eigen::MatrixXd aa(s.a.rows(), n_active);
        for (Eigen::Index k = 0; k < n_active; ++k) aa.col(k) = s.a.col(active[static_cast<std::size_t>(k)]);
        const double s2 = s.rss / static_cast<double>(static_cast<Eigen::Index>(p.rows.size()) - n_active);
        r.residual_sd = std::sqrt(s2);
        const Eigen::MatrixXd gram = aa.transpose() * aa;
        cov = s2 * gram.ldlt().solve(Eigen::MatrixXd::Identity(n_active, n_active));
    }

    r.model_1nm = emission_grid(m.name + " (model)");
    r.discharge_1nm = emission_grid(o.excitation.kind == Excitation::Kind::mercury ? "mercury lines" : "pump");
    r.bandwidth_nm = p.bandwidth;
    r.measured_values = m.values;
    const std::vector<double> zeros(p.grid.nm.size(), 0.0);
    r.reconstruction = SampledSpectrum{m.name + " (model)", m.wavelengths_nm, zeros};
    r.discharge_reconstruction = SampledSpectrum{r.discharge_1nm.name, m.wavelengths_nm, zeros};
    for (std::size_t j = 0; j < all.size(); ++j) {
        const double x = s.x(static_cast<Eigen::Index>(j)) * p.b_norm;  // back to the measurement's units
        Spectrum part = scaled(all[j]->one_nm, x);
        SampledSpectrum seen{j < nc ? comps[j].label : r.discharge_1nm.name, m.wavelengths_nm, zeros};
        for (std::size_t i = 0; i < p.grid.nm.size(); ++i) seen.values[i] = x * all[j]->measured[i];
        for (std::size_t k = 0; k < part.values.size(); ++k) r.model_1nm.values[k] += part.values[k];
        for (std::size_t i = 0; i < p.grid.nm.size(); ++i) r.reconstruction.values[i] += seen.values[i];
        if (j < nc) {
            part.name = comps[j].label;
            r.component_1nm.push_back(std::move(part));
            r.component_reconstruction.push_back(std::move(seen));
        } else {
            for (std::size_t k = 0; k < part.values.size(); ++k) r.discharge_1nm.values[k] += part.values[k];
            for (std::size_t i = 0; i < p.grid.nm.size(); ++i) r.discharge_reconstruction.values[i] += seen.values[i];
            if (o.excitation.kind == Excitation::Kind::mercury) r.mercury_power[j - nc] = x;
            else r.pump_power = x;
        }
    }
    const double visible = visible_power(r.model_1nm);
    r.discharge_line_fraction = visible > 0 ? visible_power(r.discharge_1nm) / visible : 0;

    for (std::size_t i = 0; i < nc; ++i) {
        UnmixedComponent c;
        c.id = comps[i].label;
        c.band_emitter = is_band_emitter(comps[i].phosphor);
        c.shift_nm = freedom[i].shift_nm;
        c.width_change = freedom[i].width_change;
        c.power = s.x(static_cast<Eigen::Index>(i)) * p.b_norm;
        c.radiant_share = s.x(static_cast<Eigen::Index>(i)) / p_total;
        c.emitted_photon_share = photons[i] / n_total;
        c.photon_share = absorbed[i] / s_total;
        c.mass_fraction = mass[i] / w_total;
        c.quantum_efficiency = basis.quantum_efficiency[i];
        c.share_weight = basis.share_weight[i];
        r.components.push_back(c);
    }
    if (r.uncertainty) {
        // Jacobian of the mass fractions with respect to the active amplitudes.
        Eigen::MatrixXd jac = Eigen::MatrixXd::Zero(static_cast<Eigen::Index>(nc), n_active);
        for (Eigen::Index k = 0; k < n_active; ++k) {
            const auto j = static_cast<std::size_t>(active[static_cast<std::size_t>(k)]);
            if (j >= nc) continue;  // discharge amplitudes do not enter the mass fractions
            for (std::size_t i = 0; i < nc; ++i)
                jac(static_cast<Eigen::Index>(i), k) = coef[j] * ((i == j ? 1.0 : 0.0) - r.components[i].mass_fraction) / w_total;
        }
        const Eigen::MatrixXd cov_w = jac * cov * jac.transpose();
        for (std::size_t i = 0; i < nc; ++i)
            if (s.x(static_cast<Eigen::Index>(i)) > 0)
                r.components[i].mass_fraction_sd = std::sqrt(std::max(0.0, cov_w(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(i))));
    }
    r.measured_assessment = assess_sampled(m);
    r.fit_assessment = assess_sampled(r.reconstruction);
    return r;
}

BlendComponent component_of(const Phosphor& ph) {
    BlendComponent c;
    c.label = ph.id;
    c.phosphor = ph;
    c.mass_fraction = 1;
    return c;
}

}  // namespace

std::vector<Phosphor> unmixing_candidates(const std::vector<Phosphor>& library, const Excitation& e) {
    const std::string use = e.kind == Excitation::Kind::mercury ? "lamp" : "led";
    std::vector<Phosphor> out;
    for (const auto& p : library)
        if (std::find(p.use.begin(), p.use.end(), use) != p.use.end()) out.push_back(p);
    return out;
}

BlendUnmixing unmix_blend(const SampledSpectrum& m, const std::vector<BlendComponent>& comps, const BlendUnmixingOptions& o) {
    if (comps.empty()) throw Error(fmt::format("spectrum '{}': no components to unmix it into", m.name));
    const Prepared p = prepare(m, o.bandwidth_nm);
    std::vector<BandFreedom> freedom(comps.size());
    if (o.max_shift_nm > 0 || o.max_width_change > 0) {
        std::vector<Column> cols;
        for (const auto& c : comps) cols.push_back(make_column(component_power(c.phosphor, c.label, o.excitation, 0.0), p));
        freedom = search_band_freedom(comps, cols, discharge_columns(o.excitation, p), p, o);
    }
    return finish(m, p, comps, freedom, o);
}

BlendUnmixing unmix_blend_choosing(const SampledSpectrum& m, const std::vector<Phosphor>& candidates, const BlendUnmixingOptions& o) {
    const Prepared p = prepare(m, o.bandwidth_nm);
    std::vector<BlendComponent> usable;
    std::vector<Column> cols;
    std::vector<std::string> notes;
    for (const auto& ph : candidates) {
        try {
            BlendInput one;
            one.name = ph.id;
            one.excitation = o.excitation;
            one.components = {component_of(ph)};
            const BlendBasis b = blend_basis(one);
            if (!(b.quantum_efficiency.front() > 0) || !(b.share_weight.front() > 0))
                throw Error(fmt::format("'{}' gives no light under the {}", ph.id, o.excitation.describe()));
            cols.push_back(make_column(component_power(ph, ph.id, o.excitation, 0.0), p));
            usable.push_back(component_of(ph));
        } catch (const Error& e) {
            notes.push_back(fmt::format("candidate {} left out: {}", ph.id, e.what()));
        }
    }
    if (usable.empty()) throw Error(fmt::format("spectrum '{}': no candidate phosphor can be used under the {}", m.name, o.excitation.describe()));
    const std::vector<Column> discharge = discharge_columns(o.excitation, p);
    const std::size_t k_max = std::min<std::size_t>(static_cast<std::size_t>(std::max(o.max_components, 1)), usable.size());

    double best_bic = std::numeric_limits<double>::infinity();
    std::vector<std::size_t> best;
    std::size_t tried = 0;
    for (std::size_t k = 1; k <= k_max; ++k) {
        std::vector<std::size_t> idx(k);
        for (std::size_t i = 0; i < k; ++i) idx[i] = i;
        while (true) {
            std::vector<const Column*> all;
            for (std::size_t i : idx) all.push_back(&cols[i]);
            for (const auto& c : discharge) all.push_back(&c);
            const Solve s = solve(all, p);
            ++tried;
            // A subset with a component at zero is a smaller subset already tried: not a k-subset.
            bool every_used = true;
            for (std::size_t i = 0; i < k; ++i) every_used = every_used && s.x(static_cast<Eigen::Index>(i)) > 0;
            if (every_used) {
                const double bic = bic_of(s.rss, p.rows.size(), all.size());
                if (bic < best_bic) best_bic = bic, best = idx;
            }
            // Next combination in lexicographic order.
            std::size_t pos = k;
            while (pos > 0 && idx[pos - 1] == usable.size() - k + pos - 1) --pos;
            if (pos == 0) break;
            ++idx[pos - 1];
            for (std::size_t i = pos; i < k; ++i) idx[i] = idx[i - 1] + 1;
        }
    }
    if (best.empty()) throw Error(fmt::format("spectrum '{}': no candidate phosphor contributes to the fit", m.name));
    std::vector<BlendComponent> chosen;
    for (std::size_t i : best) chosen.push_back(usable[i]);
    BlendUnmixing r = unmix_blend(m, chosen, o);
    r.selection = fmt::format("best subset by BIC, exhaustive over all {} subsets of 1 to {} of {} candidates", tried, k_max, usable.size());
    r.candidates = usable.size();
    r.subsets_tried = tried;
    r.notes.insert(r.notes.begin(), notes.begin(), notes.end());
    return r;
}

}  // namespace lampwright
