#include "lampwright/blend.hpp"

#include "lampwright/colorimetry.hpp"
#include "lampwright/error.hpp"

#include <fmt/format.h>

#include <array>
#include <cmath>

namespace lampwright {

namespace {

constexpr double kStokesTolerance = 0.01;  // share of model photons allowed on the short side

Spectrum zero_grid(const std::string& name) {
    return {name, kEmissionFirstNm, std::vector<double>(kEmissionLastNm - kEmissionFirstNm + 1, 0.0)};
}

double sum_of(const Spectrum& s) { return integrate_1nm(s.values); }

double visible_power(const Spectrum& s) {
    double p = 0;
    for (int nm = 380; nm <= 780; ++nm)
        if (s.covers(nm)) p += s.values[static_cast<std::size_t>(nm - s.first_nm)];
    return p;
}

}  // namespace

Spectrum emission_for_excitation(const Phosphor& p, const Excitation& e, double shift_nm) {
    Spectrum n = emission_photons(p, shift_nm);
    double short_side = 0;
    for (std::size_t i = 0; i < n.values.size(); ++i) {
        if (n.first_nm + static_cast<double>(i) > e.peak_nm) break;
        short_side += n.values[i];
    }
    if (short_side > kStokesTolerance)
        throw Error(fmt::format("phosphor '{}' breaks the Stokes rule under the {}: {:.1f} % of its emitted photons would be at "
                                "shorter wavelength (higher energy) than the exciting photons",
                                p.id, e.describe(), 100 * short_side));
    for (std::size_t i = 0; i < n.values.size(); ++i)
        if (n.first_nm + static_cast<double>(i) <= e.peak_nm) n.values[i] = 0;
    const double total = sum_of(n);
    for (double& v : n.values) v /= total;
    return n;
}

Spectrum mercury_visible_lines(double power) {
    static constexpr std::array<std::pair<double, double>, 5> lines{{{404.7, 0.4}, {435.8, 1.0}, {546.1, 0.9}, {577.0, 0.1}, {579.1, 0.1}}};
    double total = 0;
    for (const auto& l : lines) total += l.second;
    Spectrum s = zero_grid("mercury lines");
    for (const auto& [nm, rel] : lines) {
        const int lo = static_cast<int>(std::floor(nm));
        const double t = nm - lo;
        s.values[static_cast<std::size_t>(lo - s.first_nm)] += power * rel / total * (1 - t);
        s.values[static_cast<std::size_t>(lo + 1 - s.first_nm)] += power * rel / total * t;
    }
    return s;
}

BlendResult evaluate_blend(const BlendInput& in, const AssessOptions& options) {
    if (in.components.empty()) throw Error(fmt::format("blend '{}' has no components", in.name));
    if (!(in.absorbed_fraction > 0 && in.absorbed_fraction <= 1))
        throw Error(fmt::format("absorbed fraction must lie in (0, 1], not {:g}", in.absorbed_fraction));
    double mass_total = 0;
    for (const auto& c : in.components) {
        if (!(c.mass_fraction > 0) || !std::isfinite(c.mass_fraction))
            throw Error(fmt::format("component '{}': mass fraction must be greater than zero, not {:g}", c.label, c.mass_fraction));
        mass_total += c.mass_fraction;
    }

    BlendResult r;
    r.name = in.name;
    const Excitation& e = in.excitation;
    const double inv_lambda_exc = mean_inverse_wavelength(e);

    std::vector<double> weighted_absorption;
    double absorption_total = 0;
    for (const auto& c : in.components) {
        ComponentResult cr;
        cr.label = c.label;
        cr.mass_fraction = c.mass_fraction / mass_total;
        cr.absorption = c.absorption ? *c.absorption : absorption_for(c.phosphor, e);
        cr.quantum_efficiency = c.quantum_efficiency ? *c.quantum_efficiency : quantum_efficiency_for(c.phosphor, e);
        if (cr.absorption < 0) throw Error(fmt::format("component '{}': absorption must not be negative", c.label));
        absorption_total += cr.mass_fraction * cr.absorption;
        r.components.push_back(cr);
    }
    if (!(absorption_total > 0))
        throw Error(fmt::format("no component of blend '{}' absorbs the {}", in.name, e.describe()));

    r.phosphor_spectrum = zero_grid(in.name);
    std::vector<Spectrum> parts;
    for (std::size_t i = 0; i < in.components.size(); ++i) {
        auto& cr = r.components[i];
        cr.photon_share = cr.mass_fraction * cr.absorption / absorption_total;
        const Spectrum n = emission_for_excitation(in.components[i].phosphor, e);
        Spectrum power = zero_grid(cr.label);
        double energy_ratio = 0;
        for (std::size_t k = 0; k < n.values.size(); ++k) {
            // Photons of wavelength l carry (1/l) / <1/l_exc> of the exciting photon's energy.
            const double ratio = 1.0 / (n.first_nm + static_cast<double>(k)) / inv_lambda_exc;
            energy_ratio += n.values[k] * ratio;
            power.values[k] = cr.photon_share * cr.quantum_efficiency * n.values[k] * ratio;
        }
        cr.stokes_efficiency = energy_ratio;
        cr.radiant_W_per_W = sum_of(power);
        cr.luminous_lm_per_W = kKm * tristimulus(power).Y;
        r.quantum_yield += cr.photon_share * cr.quantum_efficiency;
        for (std::size_t k = 0; k < power.values.size(); ++k) r.phosphor_spectrum.values[k] += power.values[k];
        parts.push_back(std::move(power));
    }
    r.radiant_efficiency = sum_of(r.phosphor_spectrum);
    r.luminous_efficacy_absorbed = kKm * tristimulus(r.phosphor_spectrum).Y;
    r.stokes_efficiency = r.radiant_efficiency / r.quantum_yield;
    for (auto& cr : r.components) {
        cr.radiant_share = cr.radiant_W_per_W / r.radiant_efficiency;
        cr.luminous_share = cr.luminous_lm_per_W / r.luminous_efficacy_absorbed;
    }

    r.spectrum = r.phosphor_spectrum;
    if (e.kind == Excitation::Kind::mercury) {
        r.mercury_line_fraction = in.mercury_line_fraction.value_or(kDefaultMercuryLineFraction);
        if (r.mercury_line_fraction < 0 || r.mercury_line_fraction >= 1)
            throw Error(fmt::format("mercury line fraction must lie in [0, 1), not {:g}", r.mercury_line_fraction));
        const double f = r.mercury_line_fraction;
        const Spectrum hg = mercury_visible_lines(f / (1 - f) * visible_power(r.phosphor_spectrum));
        for (std::size_t k = 0; k < hg.values.size(); ++k) r.spectrum.values[k] += hg.values[k];
    } else if (in.absorbed_fraction < 1) {
        // Unabsorbed pump light leaves the lamp; per W absorbed, (1 - f) / f W leak.
        const Spectrum p = pump_photons(e);
        r.pump_leak_W_per_W = (1 - in.absorbed_fraction) / in.absorbed_fraction;
        double norm = 0;
        for (std::size_t k = 0; k < p.values.size(); ++k) norm += p.values[k] / (p.first_nm + static_cast<double>(k));
        for (std::size_t k = 0; k < p.values.size(); ++k)
            r.spectrum.values[k] += r.pump_leak_W_per_W * p.values[k] / (p.first_nm + static_cast<double>(k)) / norm;
    }
    r.spectrum.name = in.name;
    r.assessment = assess(r.spectrum, options);
    return r;
}

}  // namespace lampwright
