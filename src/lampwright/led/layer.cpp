#include "lampwright/led/layer.hpp"

#include "lampwright/led/layer_optics.hpp"

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
// The excitation range of the phosphor files' LED quantum efficiency (key at_365_405nm).
constexpr double kQeDataMinNm = 365.0, kQeDataMaxNm = 405.0;
// The bands of the UV and blue-light shares (IEC 62471's UV hazards below 400 nm; its blue-light
// hazard function is largest over 400-500 nm; common practice, no source).
constexpr double kUvLimitNm = 400.0, kBlueLimitNm = 500.0;

double grid_nm(std::size_t k) { return kEmissionFirstNm + static_cast<double>(k); }

// Half-maximum width of a measured spectrum (linear between grid points), nm.
double measured_fwhm(const Spectrum& s) {
    const auto& v = s.values;
    const std::size_t ip = static_cast<std::size_t>(std::max_element(v.begin(), v.end()) - v.begin());
    const double half = v[ip] / 2;
    std::size_t lo = ip, hi = ip;
    while (lo > 0 && v[lo - 1] > half) --lo;
    while (hi + 1 < v.size() && v[hi + 1] > half) ++hi;
    const double left = lo > 0 ? static_cast<double>(lo) - (v[lo] - half) / (v[lo] - v[lo - 1]) : 0.0;
    const double right = hi + 1 < v.size() ? static_cast<double>(hi) + (v[hi] - half) / (v[hi] - v[hi + 1]) : static_cast<double>(hi);
    return right - left;
}

double measured_peak_nm(const Spectrum& s) {
    const auto& v = s.values;
    return s.first_nm + static_cast<double>(std::max_element(v.begin(), v.end()) - v.begin());
}

// The measured pump moved by `shift` and stretched by `scale` about its peak l_p:
// P'(l) = P(l_p + (l - l_p - shift) / scale), linear between its points, on the emission grid.
Spectrum moved_pump(const Spectrum& measured, double shift, double scale) {
    Spectrum out = emission_grid("pump");
    const double lp = measured_peak_nm(measured);
    const double last = measured.first_nm + static_cast<double>(measured.values.size() - 1);
    for (std::size_t k = 0; k < out.values.size(); ++k) {
        const double src = lp + (out.first_nm + static_cast<double>(k) - lp - shift) / scale;
        if (src < measured.first_nm || src > last) continue;
        const double pos = src - measured.first_nm;
        const auto i = static_cast<std::size_t>(pos);
        const double f = pos - static_cast<double>(i);
        out.values[k] = i + 1 < measured.values.size() ? (1 - f) * measured.values[i] + f * measured.values[i + 1] : measured.values[i];
    }
    return out;
}

// Pump photons (sum 1) at the junction temperature of an evaluation at t_C.
Spectrum pump_photon_shape(const LayerDesign& d, double t_C) { return pump_photons_at(d, junction_temperature(d, t_C)); }

// Mixture density from the loadings (volumes add): 1/rho = sum w_i / rho_i + w_b / rho_b.
double layer_density(const LayerDesign& d) {
    double loading = 0, inv = 0;
    for (const auto& c : d.components) {
        const double rho = c.phosphor.density_g_per_cm3 > 0 ? c.phosphor.density_g_per_cm3 : kAssumedDensity_g_per_cm3;
        inv += c.loading / rho;
        loading += c.loading;
    }
    inv += (1 - loading) / d.binder_density_g_per_cm3;
    return 1.0 / inv;
}

}  // namespace

double junction_temperature(const LayerDesign& d, double t_C) {
    const double tj = d.junction_temperature_C.value_or(d.temperature_C);
    if (d.temperature_C == kRoomTemperatureC) return tj + (t_C - kRoomTemperatureC);
    return kRoomTemperatureC + (t_C - kRoomTemperatureC) * (tj - kRoomTemperatureC) / (d.temperature_C - kRoomTemperatureC);
}

namespace {
// The narrowest pump kept when a negative width change meets a large cooling (nm).
constexpr double kMinPumpFwhmNm = 1.0;
}  // namespace

Excitation pump_at(const LayerDesign& d, double junction_C) {
    const double dt = junction_C - kRoomTemperatureC;
    if (d.pump_spectrum) {
        const double f0 = measured_fwhm(*d.pump_spectrum);
        const double f = std::max(kMinPumpFwhmNm, f0 + d.pump_fwhm_change_nm_per_K * dt);
        return Excitation::led(measured_peak_nm(*d.pump_spectrum) + d.pump_peak_shift_nm_per_K * dt, f);
    }
    return Excitation::led(d.pump.peak_nm + d.pump_peak_shift_nm_per_K * dt, std::max(kMinPumpFwhmNm, d.pump.fwhm_nm + d.pump_fwhm_change_nm_per_K * dt));
}

Spectrum pump_photons_at(const LayerDesign& d, double junction_C) {
    const double dt = junction_C - kRoomTemperatureC;
    if (d.pump_spectrum) {
        // At the reference temperature the measured pump as given (no resampling).
        if (dt == 0 || (d.pump_peak_shift_nm_per_K == 0 && d.pump_fwhm_change_nm_per_K == 0)) return photons_from_power(*d.pump_spectrum);
        const double f0 = measured_fwhm(*d.pump_spectrum);
        const double scale = f0 > 0 ? pump_at(d, junction_C).fwhm_nm / f0 : 1.0;
        return photons_from_power(moved_pump(*d.pump_spectrum, d.pump_peak_shift_nm_per_K * dt, scale));
    }
    return pump_photons(pump_at(d, junction_C));
}

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

namespace {

void check_design(const LayerDesign& d) {
    if (d.components.empty()) throw Error(fmt::format("layer '{}' has no components", d.name));
    if (!(d.thickness_um >= 0)) throw Error("layer thickness must not be negative");
    if (!(d.pump_power_W > 0)) throw Error("pump power must be greater than zero");
    double total_loading = 0;
    for (const auto& c : d.components) {
        if (!(c.loading > 0)) throw Error(fmt::format("component '{}': loading must be greater than zero", c.label));
        total_loading += c.loading;
    }
    if (total_loading >= 1) throw Error(fmt::format("loadings add up to {:g}; they are mass fractions in the binder and must sum below 1", total_loading));
}

void add_warning(std::vector<std::string>* w, std::string text) {
    if (w && std::find(w->begin(), w->end(), text) == w->end()) w->push_back(std::move(text));
}

}  // namespace

LayerMedium layer_medium(const LayerDesign& d, double t_C, std::vector<std::string>* warnings) {
    check_design(d);
    const double rho = layer_density(d);
    LayerMedium m;
    m.thickness_cm = d.thickness_um * 1e-4;
    m.binder_index = d.binder_index;
    m.outside_index = d.outside_index;
    m.asymmetry = d.scattering_asymmetry;
    m.reflector_reflectance = d.reflector_reflectance;
    m.chip_area_fraction = d.chip_area_fraction;
    m.chip_reflectance = d.chip_reflectance;
    m.dome = d.top == LayerDesign::Top::dome;
    m.dome_index = d.dome_index.value_or(d.binder_index);
    m.pump = pump_photon_shape(d, t_C).values;
    // Emission, Stokes cut and QE follow the pump at this junction temperature.
    const Excitation pump = pump_at(d, junction_temperature(d, t_C));
    m.scattering.assign(kGridSize, 0.0);
    for (const auto& c : d.components) {
        const Phosphor& p = c.phosphor;
        LayerMedium::Absorber a;
        // alpha_i(l) = kappa a_i(l) c_i in 1/cm, c_i = loading x layer density.
        const auto prof = absorption_profile(p);
        a.absorption.resize(kGridSize);
        for (std::size_t k = 0; k < kGridSize; ++k) a.absorption[k] = d.mass_absorption_cm2_per_g * prof[k] * c.loading * rho;
        // Emission (photons, sum 1) at temperature; QE scaled by the quenching curve.
        const double shift = p.peak_shift_nm_per_K * (t_C - kRoomTemperatureC);
        a.emission = emission_for_excitation(p, pump, shift).values;
        const double qe25 = c.quantum_efficiency ? *c.quantum_efficiency : quantum_efficiency_for(p, pump);
        // The library's LED QE is stated for 365-405 nm excitation: said so, not extrapolated,
        // when the pump (at 25 degC) lies outside (a blue pump).
        if (!c.quantum_efficiency && (d.pump.peak_nm < kQeDataMinNm || d.pump.peak_nm > kQeDataMaxNm))
            add_warning(warnings, fmt::format("{} has quantum efficiency data for 365-405 nm excitation only: {:g} used for the {:g} nm pump "
                                              "(give quantum_efficiency in the component to set it)",
                                              p.id, qe25, d.pump.peak_nm));
        a.quantum_efficiency = std::min(1.0, c.brightness_factor * qe25 * thermal_factor(p, t_C) / thermal_factor(p, kRoomTemperatureC));
        m.components.push_back(std::move(a));
        // Scattering by the grains at their volume fraction f = loading x rho_layer / rho_grain.
        const double density = p.density_g_per_cm3 > 0 ? p.density_g_per_cm3 : kAssumedDensity_g_per_cm3;
        const double d50 = p.d50_um > 0 ? p.d50_um : kAssumedD50_um;
        const double n = p.refractive_index > 0 ? p.refractive_index : kAssumedGrainIndex;
        if (!(p.density_g_per_cm3 > 0)) add_warning(warnings, fmt::format("no density for {}: {:g} g/cm3 assumed", p.id, kAssumedDensity_g_per_cm3));
        if (!(p.d50_um > 0)) add_warning(warnings, fmt::format("no grain size (d50) for {}: {:g} um assumed", p.id, kAssumedD50_um));
        if (!(p.refractive_index > 0)) add_warning(warnings, fmt::format("no refractive index for {}: {:g} assumed", p.id, kAssumedGrainIndex));
        const double f = c.loading * rho / density;
        for (std::size_t k = 0; k < kGridSize; ++k) m.scattering[k] += d.scattering_scale * grain_scattering_per_cm(f, d50, n, d.binder_index, grid_nm(k));
    }
    return m;
}

LayerResult evaluate_layer(const LayerDesign& d, std::optional<double> temperature_C, const AssessOptions& options, int generations,
                           const LayerSolver& solver) {
    const double t_C = temperature_C.value_or(d.temperature_C);
    std::vector<std::string> warnings;
    const LayerMedium med = layer_medium(d, t_C, &warnings);
    const std::size_t n = d.components.size();
    const bool mc = solver.method == LayerSolver::Method::monte_carlo;
    const TransferResult tr = mc ? transfer_monte_carlo(med, solver.photons, solver.seed) : transfer_two_flux(med, generations);

    LayerResult r;
    r.name = d.name;
    r.temperature_C = t_C;
    r.method = mc ? "monte-carlo" : "two-flux";
    r.photons = mc ? solver.photons : 0;
    r.seed = mc ? solver.seed : 0;
    const Spectrum pump_spectrum = pump_photon_shape(d, t_C);
    r.junction_temperature_C = junction_temperature(d, t_C);
    const Excitation pump_now = pump_at(d, r.junction_temperature_C);
    r.pump_peak_nm = pump_now.peak_nm;
    r.pump_fwhm_nm = pump_now.fwhm_nm;
    // Photons in units of h c = 1 (1/nm per photon): pump photons per W of pump.
    const double scale = d.pump_power_W / mean_inverse_wavelength(pump_spectrum);
    r.converted_spectrum = emission_grid(d.name + " converted");
    r.leaked_pump_spectrum = emission_grid(d.name + " leaked pump");
    for (std::size_t k = 0; k < kGridSize; ++k) {
        r.pump_photons_leaked += tr.leaked[k];
        r.photons_escaping += tr.converted[k];
        const double w = tr.leaked[k] / grid_nm(k) * scale;
        r.leaked_pump_spectrum.values[k] = w;
        r.leaked_pump_W += w;
        if (grid_nm(k) < kUvVioletLimitNm) r.leaked_uv_violet_W += w;
        r.converted_spectrum.values[k] = tr.converted[k] / grid_nm(k) * scale;
    }
    for (std::size_t i = 0; i < n; ++i) {
        const auto& t = tr.components[i];
        const double qe = med.components[i].quantum_efficiency;
        LayerComponentResult cr;
        cr.label = d.components[i].label;
        cr.quantum_efficiency = qe;
        cr.pump_photons_absorbed = t.pump_absorbed;
        cr.photons_absorbed = t.absorbed;
        cr.photons_emitted = t.emitted;
        cr.photons_escaping = t.escaping;
        cr.power_escaping_W = t.escaping_energy * scale;
        r.photons_lost += t.absorbed - t.emitted;
        // Energy: quantum loss (1 - QE) E_abs; Stokes loss QE E_abs - E_emitted (expected values in the Monte Carlo).
        r.quantum_loss_W += (1 - qe) * t.absorbed_energy * scale;
        r.stokes_loss_W += (qe * t.absorbed_energy - t.emitted_energy) * scale;
        r.components.push_back(cr);
    }
    r.photons_package = tr.package_photons;
    r.package_loss_W = tr.package_energy * scale;
    r.photons_chip = tr.chip_photons;
    r.chip_loss_W = tr.chip_energy * scale;
    r.pump_power_W = d.pump_power_W;
    r.converted_W = integrate_1nm(r.converted_spectrum.values);
    r.spectrum = r.converted_spectrum;
    r.spectrum.name = d.name;
    for (std::size_t k = 0; k < kGridSize; ++k) r.spectrum.values[k] += r.leaked_pump_spectrum.values[k];
    const double out_W = r.converted_W + r.leaked_pump_W;
    double uv = 0, blue = 0;
    for (std::size_t k = 0; k < kGridSize; ++k) {
        const double w = r.spectrum.values[k];
        if (grid_nm(k) < kUvLimitNm) uv += w;
        else if (grid_nm(k) < kBlueLimitNm) blue += w;
    }
    r.uv_share = out_W > 0 ? uv / out_W : 0.0;
    r.blue_share = out_W > 0 ? blue / out_W : 0.0;
    r.pump_leak_fraction = out_W > 0 ? r.leaked_pump_W / out_W : 0.0;
    r.converted_efficiency = r.converted_W / d.pump_power_W;
    r.total_efficiency = out_W / d.pump_power_W;
    r.efficacy_lm_per_W_pump = kKm * tristimulus(r.spectrum).Y / d.pump_power_W;
    r.assessment = assess(r.spectrum, options);
    // A phosphor without quenching data is held constant: say so, once per phosphor (issue 11:
    // never a silent assumption); likewise assumed grain data. After assess(), so every output
    // that prints the assessment's warnings (text notes, JSON `warnings`, stderr) carries them.
    for (const auto& c : d.components) {
        if (auto w = missing_thermal_data_warning(c.phosphor, t_C)) add_warning(&r.assessment.warnings, std::move(*w));
        if (auto w = missing_peak_shift_warning(c.phosphor, t_C)) add_warning(&r.assessment.warnings, std::move(*w));
    }
    for (auto& w : warnings) add_warning(&r.assessment.warnings, std::move(w));
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

LayerEvaluation evaluate_layer_design(const LayerDesign& d, const AssessOptions& options, const LayerSolver& solver) {
    LayerEvaluation r{d, evaluate_layer(d, kRoomTemperatureC, options, 0, solver), evaluate_layer(d, d.temperature_C, options, 0, solver), 0};
    r.shift_steps = chromaticity_shift_steps(r.room.assessment.xy, r.operating.assessment.xy);
    return r;
}

}  // namespace lampwright
