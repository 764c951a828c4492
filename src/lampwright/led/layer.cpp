#include "lampwright/led/layer.hpp"

#include "lampwright/phosphor/blend.hpp"
#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/core/error.hpp"

#include <Eigen/Dense>
#include <fmt/format.h>

#include <algorithm>
#include <cmath>

namespace lampwright {

namespace {

constexpr int kGridSize = kEmissionGridSize;
// QE data are relative to the phosphor data's reference temperature; the layer's room temperature is it.
static_assert(kRoomTemperatureC == kThermalReferenceC);
constexpr double kUvVioletLimitNm = 420.0;

double grid_nm(std::size_t k) { return kEmissionFirstNm + static_cast<double>(k); }

// Pump photons (sum 1) from the Gaussian model or the measured pump power.
Spectrum pump_photon_shape(const LayerDesign& d) { return d.pump_spectrum ? photons_from_power(*d.pump_spectrum) : pump_photons(d.pump); }

// Mixture density from the loadings (volumes add): 1/rho = sum w_i / rho_i + w_b / rho_b.
double layer_density(const LayerDesign& d) {
    double loading = 0, inv = 0;
    for (const auto& c : d.components) {
        const double rho = c.phosphor.density_g_per_cm3 > 0 ? c.phosphor.density_g_per_cm3 : 4.0;
        inv += c.loading / rho;
        loading += c.loading;
    }
    inv += (1 - loading) / d.binder_density_g_per_cm3;
    return 1.0 / inv;
}

}  // namespace

std::vector<double> absorption_profile(const Phosphor& p) {
    // Stokes rule, smoothly: at wavelength l the absorption is weighted by the share of the
    // phosphor's own emitted photons that lie at longer wavelengths (1 - CDF(l)), so it fades out
    // across the phosphor's own emission band instead of stopping at an edge (self-absorption of
    // the band's short side remains, as in real Eu2+ and Ce3+ phosphors).
    const Spectrum own = emission_photons(p);
    std::vector<double> a(kGridSize, 0.0);
    double below = 0;
    for (std::size_t k = 0; k < a.size(); ++k) {
        below += own.values[k];
        const double nm = grid_nm(k);
        if (p.absorption_nm.empty() || nm > p.absorption_nm.back()) continue;
        const double rel = nm < p.absorption_nm.front() ? p.absorption_rel.front() : *absorption_at(p, nm);
        a[k] = rel * std::max(0.0, 1.0 - below);
    }
    return a;
}

LayerResult evaluate_layer(const LayerDesign& d, std::optional<double> temperature_C, const AssessOptions& options, int generations) {
    if (d.components.empty()) throw Error(fmt::format("layer '{}' has no components", d.name));
    if (!(d.thickness_um >= 0)) throw Error("layer thickness must not be negative");
    if (!(d.pump_power_W > 0)) throw Error("pump power must be greater than zero");
    double total_loading = 0;
    for (const auto& c : d.components) {
        if (!(c.loading > 0)) throw Error(fmt::format("component '{}': loading must be greater than zero", c.label));
        total_loading += c.loading;
    }
    if (total_loading >= 1) throw Error(fmt::format("loadings add up to {:g}; they are mass fractions in the binder and must sum below 1", total_loading));

    const double t_C = temperature_C.value_or(d.temperature_C);
    const std::size_t n = d.components.size();
    const double rho = layer_density(d);
    const double d_cm = d.thickness_um * 1e-4;
    const Spectrum pump_spectrum = pump_photon_shape(d);
    const std::vector<double>& pump = pump_spectrum.values;

    // alpha_i(l) in 1/cm.
    std::vector<std::vector<double>> alpha(n);
    std::vector<double> alpha_total(kGridSize, 0.0);
    for (std::size_t i = 0; i < n; ++i) {
        const auto a = absorption_profile(d.components[i].phosphor);
        const double c = d.components[i].loading * rho;
        alpha[i].resize(kGridSize);
        for (std::size_t k = 0; k < kGridSize; ++k) {
            alpha[i][k] = d.mass_absorption_cm2_per_g * a[k] * c;
            alpha_total[k] += alpha[i][k];
        }
    }

    // Emission shapes (photons, sum 1) at temperature, with the Stokes check against the pump.
    std::vector<std::vector<double>> emission(n);
    std::vector<double> qe(n);
    for (std::size_t i = 0; i < n; ++i) {
        const auto& c = d.components[i];
        const double shift = c.phosphor.peak_shift_nm_per_K * (t_C - kRoomTemperatureC);
        emission[i] = emission_for_excitation(c.phosphor, d.pump, shift).values;
        const double qe25 = c.quantum_efficiency ? *c.quantum_efficiency : quantum_efficiency_for(c.phosphor, d.pump);
        qe[i] = qe25 * thermal_factor(c.phosphor, t_C) / thermal_factor(c.phosphor, kRoomTemperatureC);
        if (qe[i] > 1) qe[i] = 1;
    }

    // Pump: transmitted and absorbed per phosphor (photons per pump photon), absorbed energy.
    LayerResult r;
    r.name = d.name;
    r.temperature_C = t_C;
    std::vector<double> leak(kGridSize, 0.0);
    Eigen::VectorXd pump_absorbed = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(n));
    std::vector<double> absorbed_energy(n, 0.0);  // in units of photons x (1/nm), i.e. h c = 1
    for (std::size_t k = 0; k < kGridSize; ++k) {
        const double transmitted = std::exp(-alpha_total[k] * d_cm * d.pump_path_factor);
        leak[k] = pump[k] * transmitted;
        r.pump_photons_leaked += leak[k];
        if (alpha_total[k] <= 0) continue;
        for (std::size_t i = 0; i < n; ++i) {
            const double taken = pump[k] * (1 - transmitted) * alpha[i][k] / alpha_total[k];
            pump_absorbed(static_cast<Eigen::Index>(i)) += taken;
            absorbed_energy[i] += taken / grid_nm(k);
        }
    }

    // Re-absorption matrix M(i, j): probability that a photon emitted by i is absorbed by j.
    std::vector<double> escape(kGridSize);
    for (std::size_t k = 0; k < kGridSize; ++k) escape[k] = std::exp(-alpha_total[k] * d_cm * d.emission_path_factor);
    Eigen::MatrixXd M = Eigen::MatrixXd::Zero(static_cast<Eigen::Index>(n), static_cast<Eigen::Index>(n));
    std::vector<std::vector<double>> energy_per_absorbed(n, std::vector<double>(n, 0.0));  // <1/l> of i-photons taken by j
    for (std::size_t i = 0; i < n; ++i)
        for (std::size_t k = 0; k < kGridSize; ++k) {
            if (emission[i][k] == 0 || alpha_total[k] <= 0) continue;
            const double absorbed = emission[i][k] * (1 - escape[k]);
            for (std::size_t j = 0; j < n; ++j) {
                const double share = absorbed * alpha[j][k] / alpha_total[k];
                M(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j)) += share;
                energy_per_absorbed[i][j] += share / grid_nm(k);
            }
        }
    // Cascade: N = N_pump + M^T Q N  ->  (I - M^T Q) N = N_pump.
    Eigen::VectorXd q(static_cast<Eigen::Index>(n));
    for (std::size_t i = 0; i < n; ++i) q(static_cast<Eigen::Index>(i)) = qe[i];
    const Eigen::MatrixXd A = Eigen::MatrixXd::Identity(static_cast<Eigen::Index>(n), static_cast<Eigen::Index>(n)) - M.transpose() * q.asDiagonal();
    Eigen::VectorXd absorbed;
    if (generations <= 0) {
        absorbed = A.partialPivLu().solve(pump_absorbed);
    } else {
        Eigen::VectorXd generation = pump_absorbed;
        absorbed = generation;
        for (int g = 1; g < generations; ++g) {
            generation = M.transpose() * q.asDiagonal() * generation;
            absorbed += generation;
        }
    }
    const Eigen::VectorXd emitted = q.cwiseProduct(absorbed);

    // Escaping light and the energy bookkeeping.
    const double photons_per_W = 1.0 / mean_inverse_wavelength(pump_spectrum);  // pump photons (h c = 1 units) per W of pump
    r.converted_spectrum = emission_grid(d.name + " converted");
    r.leaked_pump_spectrum = emission_grid(d.name + " leaked pump");
    for (std::size_t i = 0; i < n; ++i) {
        for (std::size_t j = 0; j < n; ++j) absorbed_energy[j] += emitted(static_cast<Eigen::Index>(i)) * energy_per_absorbed[i][j];
        LayerComponentResult cr;
        cr.label = d.components[i].label;
        cr.quantum_efficiency = qe[i];
        cr.pump_photons_absorbed = pump_absorbed(static_cast<Eigen::Index>(i));
        cr.photons_absorbed = absorbed(static_cast<Eigen::Index>(i));
        cr.photons_emitted = emitted(static_cast<Eigen::Index>(i));
        for (std::size_t k = 0; k < kGridSize; ++k) {
            const double out = cr.photons_emitted * emission[i][k] * escape[k];
            cr.photons_escaping += out;
            const double w = out / grid_nm(k) * photons_per_W * d.pump_power_W;
            cr.power_escaping_W += w;
            r.converted_spectrum.values[k] += w;
        }
        r.photons_escaping += cr.photons_escaping;
        r.photons_lost += (1 - qe[i]) * cr.photons_absorbed;
        r.components.push_back(cr);
    }
    // Energy (h c = 1, per pump photon -> W): absorbed energy E_i; quantum loss (1 - QE_i) E_i;
    // Stokes loss QE_i E_i - emitted energy_i.
    for (std::size_t i = 0; i < n; ++i) {
        double emitted_energy = 0;
        for (std::size_t k = 0; k < kGridSize; ++k) emitted_energy += emitted(static_cast<Eigen::Index>(i)) * emission[i][k] / grid_nm(k);
        const double scale = photons_per_W * d.pump_power_W;
        r.quantum_loss_W += (1 - qe[i]) * absorbed_energy[i] * scale;
        r.stokes_loss_W += (qe[i] * absorbed_energy[i] - emitted_energy) * scale;
    }
    for (std::size_t k = 0; k < kGridSize; ++k) {
        const double w = leak[k] / grid_nm(k) * photons_per_W * d.pump_power_W;
        r.leaked_pump_spectrum.values[k] = w;
        r.leaked_pump_W += w;
        if (grid_nm(k) < kUvVioletLimitNm) r.leaked_uv_violet_W += w;
    }
    r.pump_power_W = d.pump_power_W;
    r.converted_W = integrate_1nm(r.converted_spectrum.values);
    r.spectrum = r.converted_spectrum;
    r.spectrum.name = d.name;
    for (std::size_t k = 0; k < kGridSize; ++k) r.spectrum.values[k] += r.leaked_pump_spectrum.values[k];
    const double out_W = r.converted_W + r.leaked_pump_W;
    r.pump_leak_fraction = r.leaked_pump_W / out_W;
    r.converted_efficiency = r.converted_W / d.pump_power_W;
    r.total_efficiency = out_W / d.pump_power_W;
    r.efficacy_lm_per_W_pump = kKm * tristimulus(r.spectrum).Y / d.pump_power_W;
    r.assessment = assess(r.spectrum, options);
    // A phosphor without quenching data is held constant: say so, once per phosphor (issue 11:
    // never a silent assumption). After assess(), so every output that prints the assessment's
    // warnings (text notes, JSON `warnings`, stderr) carries it.
    for (const auto& c : d.components)
        if (auto w = missing_thermal_data_warning(c.phosphor, t_C))
            if (std::find(r.assessment.warnings.begin(), r.assessment.warnings.end(), *w) == r.assessment.warnings.end())
                r.assessment.warnings.push_back(std::move(*w));
    return r;
}

}  // namespace lampwright

#include "lampwright/design/targets.hpp"

namespace lampwright {

double chromaticity_shift_steps(const Chromaticity& from, const Chromaticity& to) {
    return macadam_steps(nearest_step_ellipse(from), to);
}

bool leak_needs_caution(const LayerResult& r, double pump_peak_nm) {
    return pump_peak_nm < kUvVioletLimitNm && r.leaked_uv_violet_W > std::min(1e-3 * r.pump_power_W, 1e-3);
}

LayerEvaluation evaluate_layer_design(const LayerDesign& d, const AssessOptions& options) {
    LayerEvaluation r{d, evaluate_layer(d, kRoomTemperatureC, options), evaluate_layer(d, d.temperature_C, options), 0};
    r.shift_steps = chromaticity_shift_steps(r.room.assessment.xy, r.operating.assessment.xy);
    return r;
}

}  // namespace lampwright
