#include "lampwright/phosphor/blend.hpp"

#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/core/error.hpp"

#include <fmt/format.h>

#include <array>
#include <cmath>

namespace lampwright {

namespace {

constexpr double kStokesTolerance = 0.01;  // share of model photons allowed on the short side

double sum_of(const Spectrum& s) { return integrate_1nm(s.values); }

double grain_density(const BlendComponent& c) { return c.density_g_per_cm3.value_or(c.phosphor.density_g_per_cm3); }
double grain_d50(const BlendComponent& c) { return c.d50_um.value_or(c.phosphor.d50_um); }
bool has_grain_data(const BlendComponent& c) { return grain_density(c) > 0 && grain_d50(c) > 0; }

// The coating's grains at the input's mass fractions (equal shares when they are not all given,
// as at the start of a fit from scratch).
std::vector<CoatingGrain> coating_grains(const BlendInput& in) {
    double total = 0;
    bool all_positive = true;
    for (const auto& c : in.components) {
        if (c.mass_fraction > 0 && std::isfinite(c.mass_fraction)) total += c.mass_fraction;
        else all_positive = false;
    }
    std::vector<CoatingGrain> grains;
    const double equal = 1.0 / static_cast<double>(in.components.size());
    for (const auto& c : in.components) {
        CoatingGrain g;
        g.mass_fraction = all_positive ? c.mass_fraction / total : equal;
        g.density_g_per_cm3 = grain_density(c);
        g.d50_um = grain_d50(c);
        g.uv_absorption = c.absorption ? *c.absorption : absorption_for(c.phosphor, in.excitation);
        g.uv_reflectance = c.phosphor.reflectance_254nm;
        g.absorption_365nm = absorption_at(c.phosphor, mercury_uv_lines().wavelength_365nm).value_or(0.0);
        grains.push_back(g);
    }
    return grains;
}

// The effective QE of a lamp phosphor under both UV lines: (1 - f) QE_254 + f QE_185.
double uv_quantum_efficiency(const BlendComponent& c, double f185, std::vector<std::string>& notes) {
    const double qe254 = quantum_efficiency_for(c.phosphor, Excitation::mercury());
    if (!(f185 > 0)) return qe254;
    if (!c.phosphor.qe_185nm) {
        notes.push_back(fmt::format("component '{}' has no QE at 185 nm (at_185nm): its 254 nm value is used for the 184.9 nm photons too",
                                    c.label));
        return qe254;
    }
    return (1 - f185) * qe254 + f185 * *c.phosphor.qe_185nm;
}

}  // namespace

CoatingResult blend_coating(const BlendInput& in, double weight) {
    CoatingResult r;
    if (in.excitation.kind != Excitation::Kind::mercury || in.components.empty()) return r;
    for (const auto& c : in.components)
        if (!has_grain_data(c)) return r;
    const std::vector<CoatingGrain> grains = coating_grains(in);
    const CoatingOptics o = coating_optics(grains, weight);
    r.modelled = true;
    r.weight_mg_per_cm2 = weight;
    r.uv_absorbed = o.uv_absorbed;
    r.uv_lost = o.uv_lost;
    r.visible_escape = o.visible_escape;
    r.line_escape = o.line_escape;
    r.uv365_escape = o.uv365_escape;
    r.conversion = o.conversion();
    r.uv_185nm_fraction = in.uv_185nm_fraction.value_or(mercury_uv_lines().photon_fraction_185nm);
    return r;
}

void add_coating_optimum(const BlendInput& in, CoatingResult& coating) {
    if (!coating.modelled) return;
    const std::vector<CoatingGrain> grains = coating_grains(in);
    coating.optimum_weight_mg_per_cm2 = optimum_coating_weight(grains);
    coating.optimum_conversion = coating_optics(grains, coating.optimum_weight_mg_per_cm2).conversion();
}

double visible_power(const Spectrum& s) {
    double p = 0;
    for (int nm = 380; nm <= 780; ++nm)
        if (s.covers(nm)) p += s.values[static_cast<std::size_t>(nm - s.first_nm)];
    return p;
}

std::vector<double> normalised_mass_fractions(const BlendInput& in) {
    double total = 0;
    for (const auto& c : in.components) total += c.mass_fraction;
    std::vector<double> w;
    for (const auto& c : in.components) w.push_back(total > 0 ? c.mass_fraction / total : 0);
    return w;
}

Spectrum emission_for_excitation(const Phosphor& p, const Excitation& e, double shift_nm, double width_scale) {
    Spectrum n = emission_photons(p, shift_nm, width_scale);
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

Spectrum mercury_visible_lines(double power, const std::array<double, 4>& relative_power) {
    double total = 0;
    for (double r : relative_power) total += r;
    Spectrum s = emission_grid("mercury lines");
    if (!(total > 0)) return s;
    for (std::size_t g = 0; g < relative_power.size(); ++g) {
        const double p = power * relative_power[g] / total;
        if (g == 3) {  // the 577.0/579.1 nm pair, one 5 nm value in the CIE tables: split 1:1
            add_line(s, 577.0, 0.5 * p);
            add_line(s, 579.1, 0.5 * p);
        } else {
            add_line(s, kMercuryLineGroupsNm[g], p);
        }
    }
    return s;
}

Spectrum mercury_line_group(std::size_t group) {
    std::array<double, 4> unit{};
    unit.at(group) = 1.0;
    return mercury_visible_lines(1.0, unit);
}

BlendBasis blend_basis(const BlendInput& in) {
    if (in.components.empty()) throw Error(fmt::format("blend '{}' has no components", in.name));
    if (!(in.absorbed_fraction > 0 && in.absorbed_fraction <= 1))
        throw Error(fmt::format("absorbed fraction must lie in (0, 1], not {:g}", in.absorbed_fraction));
    BlendBasis b;
    const Excitation& e = in.excitation;
    double inv_lambda_exc = mean_inverse_wavelength(e);
    Spectrum leak = emission_grid("leak");
    if (e.kind == Excitation::Kind::mercury) {
        // The coating model decides how much UV the phosphors absorb and how much is lost.
        if (in.absorbed_fraction != 1.0)
            throw Error(fmt::format("an absorbed fraction ({:g}) applies to an LED pump only: for a mercury discharge the coating model "
                                    "gives the absorbed UV (set the coating weight instead)",
                                    in.absorbed_fraction));
        b.lamp_type = in.lamp_type ? *in.lamp_type : infer_lamp_type(in.components);
        const MercuryLineSet& set = mercury_line_set(b.lamp_type);
        b.mercury_line_fraction = in.mercury_line_fraction.value_or(set.visible_fraction);
        b.mercury_line_ratios = in.mercury_line_ratios.value_or(set.relative_power);
        if (b.mercury_line_fraction < 0 || b.mercury_line_fraction >= 1)
            throw Error(fmt::format("mercury line fraction must lie in [0, 1), not {:g}", b.mercury_line_fraction));
        for (double r : b.mercury_line_ratios)
            if (!(r >= 0 && std::isfinite(r))) throw Error("mercury line ratios must be numbers >= 0");
        const std::string fraction_from = in.mercury_line_fraction_from.empty() ? "the recipe" : in.mercury_line_fraction_from;
        b.mercury_source = in.mercury_line_fraction && in.mercury_line_ratios
                               ? (in.mercury_line_fraction_from.empty() ? "the recipe" : "fraction: " + fraction_from + "; ratios: the recipe")
                           : in.mercury_line_fraction ? "fraction: " + fraction_from + "; ratios: " + set.source
                           : in.mercury_line_ratios   ? "ratios: the recipe; fraction: " + set.source
                                                      : set.source;
        // Opaque grains at 254 nm: shares by projected area, when every component has grain data.
        b.grain_model = true;
        for (const auto& c : in.components) {
            if (!has_grain_data(c)) {
                b.grain_model = false;
                b.notes.push_back(fmt::format("component '{}' has no {}: absorbed shares taken as mass x absorption for every component "
                                              "(give density_g_per_cm3 and d50_um in the recipe)",
                                              c.label, !(grain_density(c) > 0) ? "density" : "particle size d50"));
                break;
            }
        }
        b.uv_185nm_fraction = in.uv_185nm_fraction.value_or(mercury_uv_lines().photon_fraction_185nm);
        if (!(b.uv_185nm_fraction >= 0 && b.uv_185nm_fraction < 1))
            throw Error(fmt::format("the 185 nm share of the UV photons must lie in [0, 1), not {:g}", b.uv_185nm_fraction));
        if (b.grain_model) {
            const double reference_weight = default_coating_weight(b.lamp_type);
            const bool own_weight = in.coating_weight_mg_per_cm2.has_value();
            b.coating = blend_coating(in, in.coating_weight_mg_per_cm2.value_or(reference_weight));
            b.coating.uv_185nm_fraction = b.uv_185nm_fraction;
            b.coating.weight_source = own_weight ? "the recipe"
                                                 : fmt::format("the {} default (data/coating/lamp_coating.toml, from memory)", b.lamp_type);
            // The visible-line fraction is derived from lamps taken to be coated at the lamp type's
            // default weight. Lines reach the outside with the coating's line escape L; phosphor light
            // with its conversion C; so the lines' power relative to the phosphors' scales as L / C.
            if (!in.mercury_line_fraction && own_weight) {
                const CoatingResult ref = blend_coating(in, reference_weight);
                const double scale = (b.coating.line_escape / b.coating.conversion) / (ref.line_escape / ref.conversion);
                const double odds = b.mercury_line_fraction / (1 - b.mercury_line_fraction) * scale;
                b.mercury_line_fraction = odds / (1 + odds);
                b.mercury_source += fmt::format("; fraction moved from {:.4f} at the default {:g} mg/cm2 to this coating weight by its line "
                                                "escape / UV conversion (coating model)",
                                                set.visible_fraction, reference_weight);
            }
        } else if (in.coating_weight_mg_per_cm2) {
            b.notes.push_back("coating weight given but not modelled: the coating model needs every component's density and d50");
        }
    } else if (in.absorbed_fraction < 1) {
        // Unabsorbed pump light leaves the lamp; per W absorbed, (1 - f) / f W leak. It does not
        // depend on the shares, and the shares sum to one, so each component carries all of it.
        const Spectrum p = power_from_photons(pump_photons(e));
        b.pump_leak_W_per_W = (1 - in.absorbed_fraction) / in.absorbed_fraction;
        for (std::size_t k = 0; k < p.values.size(); ++k) leak.values[k] = b.pump_leak_W_per_W * p.values[k];
    }
    if (e.kind == Excitation::Kind::mercury)  // the mean photon energy of the 253.7 and 184.9 nm photons
        inv_lambda_exc = (1 - b.uv_185nm_fraction) / e.peak_nm + b.uv_185nm_fraction / kMercury185Nm;
    for (const auto& c : in.components) {
        const double a = c.absorption ? *c.absorption : absorption_for(c.phosphor, e);
        const double qe = c.quantum_efficiency                  ? *c.quantum_efficiency
                          : e.kind == Excitation::Kind::mercury ? uv_quantum_efficiency(c, b.uv_185nm_fraction, b.notes)
                                                                : quantum_efficiency_for(c.phosphor, e);
        if (a < 0) throw Error(fmt::format("component '{}': absorption must not be negative", c.label));
        const Spectrum n = emission_for_excitation(c.phosphor, e);
        Spectrum power = emission_grid(c.label);
        double energy_ratio = 0;
        for (std::size_t k = 0; k < n.values.size(); ++k) {
            // Photons of wavelength l carry (1/l) / <1/l_exc> of the exciting photon's energy.
            const double ratio = 1.0 / (n.first_nm + static_cast<double>(k)) / inv_lambda_exc;
            energy_ratio += n.values[k] * ratio;
            power.values[k] = qe * n.values[k] * ratio;
        }
        Spectrum light = power;
        if (e.kind == Excitation::Kind::mercury) {
            const double f = b.mercury_line_fraction;
            const double line_power = f / (1 - f) * visible_power(power);
            const Spectrum hg = mercury_visible_lines(line_power, b.mercury_line_ratios);
            for (std::size_t k = 0; k < hg.values.size(); ++k) light.values[k] += hg.values[k];
            if (b.coating.modelled) {
                // The 365 nm group leaves with its own escape (phosphors that absorb at 365 nm take
                // part of it); it is set against the 435.8 nm line, which leaves with the line escape.
                double ratio_total = 0;
                for (double r : b.mercury_line_ratios) ratio_total += r;
                const double p436 = ratio_total > 0 ? line_power * b.mercury_line_ratios[1] / ratio_total : 0.0;
                const MercuryUvLines& uv = mercury_uv_lines();
                add_line(light, uv.wavelength_365nm, p436 * uv.relative_power_365nm * b.coating.uv365_escape / b.coating.line_escape);
            }
        }
        for (std::size_t k = 0; k < leak.values.size(); ++k) light.values[k] += leak.values[k];
        b.absorption.push_back(a);
        if (b.grain_model) {
            // g = a (1 - R) / (rho d50): projected area per unit mass of opaque spheres, less reflection.
            b.share_weight.push_back(a * (1 - c.phosphor.reflectance_254nm) / (grain_density(c) * grain_d50(c)));
        } else {
            b.share_weight.push_back(a);
        }
        b.quantum_efficiency.push_back(qe);
        b.stokes_efficiency.push_back(energy_ratio);
        b.phosphor_light.push_back(std::move(power));
        b.light.push_back(std::move(light));
    }
    return b;
}

std::vector<double> photon_shares(const BlendBasis& b, const std::vector<double>& w) {
    if (w.size() != b.share_weight.size()) throw Error("photon_shares: one mass fraction per component");
    double total = 0;
    for (std::size_t i = 0; i < w.size(); ++i) total += w[i] * b.share_weight[i];
    if (!(total > 0)) throw Error("no component of the blend absorbs the excitation");
    std::vector<double> s(w.size());
    for (std::size_t i = 0; i < w.size(); ++i) s[i] = w[i] * b.share_weight[i] / total;
    return s;
}

namespace {

// evaluate_blend without the coating's optimum weight (a Brent search of about 30 coating
// evaluations), which depends on the fractions but not on the weight: a sweep finds it once.
BlendResult evaluate_blend_at_weight(const BlendInput& in, const AssessOptions& options) {
    if (in.components.empty()) throw Error(fmt::format("blend '{}' has no components", in.name));
    double mass_total = 0;
    for (const auto& c : in.components) {
        if (!(c.mass_fraction > 0) || !std::isfinite(c.mass_fraction))
            throw Error(fmt::format("component '{}': mass fraction must be greater than zero, not {:g}", c.label, c.mass_fraction));
        mass_total += c.mass_fraction;
    }
    const BlendBasis b = blend_basis(in);

    BlendResult r;
    r.name = in.name;
    double absorption_total = 0;
    for (std::size_t i = 0; i < in.components.size(); ++i) {
        ComponentResult cr;
        cr.label = in.components[i].label;
        cr.mass_fraction = in.components[i].mass_fraction / mass_total;
        cr.absorption = b.absorption[i];
        cr.quantum_efficiency = b.quantum_efficiency[i];
        cr.share_weight = b.share_weight[i];
        if (b.grain_model) {
            const auto& c = in.components[i];
            cr.density_g_per_cm3 = grain_density(c);
            cr.d50_um = grain_d50(c);
            cr.reflectance = c.phosphor.reflectance_254nm;
        }
        absorption_total += cr.mass_fraction * cr.share_weight;
        r.components.push_back(cr);
    }
    if (!(absorption_total > 0))
        throw Error(fmt::format("no component of blend '{}' absorbs the {}", in.name, in.excitation.describe()));

    r.phosphor_spectrum = emission_grid(in.name);
    r.spectrum = emission_grid(in.name);
    for (std::size_t i = 0; i < in.components.size(); ++i) {
        auto& cr = r.components[i];
        cr.photon_share = cr.mass_fraction * cr.share_weight / absorption_total;
        const Spectrum power = scaled(b.phosphor_light[i], cr.photon_share);
        cr.stokes_efficiency = b.stokes_efficiency[i];
        cr.radiant_W_per_W = sum_of(power);
        cr.luminous_lm_per_W = kKm * tristimulus(power).Y;
        r.quantum_yield += cr.photon_share * cr.quantum_efficiency;
        for (std::size_t k = 0; k < power.values.size(); ++k) {
            r.phosphor_spectrum.values[k] += power.values[k];
            r.spectrum.values[k] += cr.photon_share * b.light[i].values[k];
        }
    }
    r.radiant_efficiency = sum_of(r.phosphor_spectrum);
    r.luminous_efficacy_absorbed = kKm * tristimulus(r.phosphor_spectrum).Y;
    r.stokes_efficiency = r.radiant_efficiency / r.quantum_yield;
    for (auto& cr : r.components) {
        cr.radiant_share = cr.radiant_W_per_W / r.radiant_efficiency;
        cr.luminous_share = cr.luminous_lm_per_W / r.luminous_efficacy_absorbed;
    }
    r.mercury_line_fraction = b.mercury_line_fraction;
    r.mercury_line_ratios = b.mercury_line_ratios;
    r.lamp_type = b.lamp_type;
    r.mercury_source = b.mercury_source;
    r.grain_model = b.grain_model;
    r.pump_leak_W_per_W = b.pump_leak_W_per_W;
    r.coating = b.coating;
    if (r.coating.modelled) r.coating.luminous_efficacy_uv = r.luminous_efficacy_absorbed * r.coating.conversion;
    // UV-A (315-400 nm, CIE S 017 / ILV) leaving the lamp, per W of absorbed excitation.
    for (int nm = 315; nm <= 400; ++nm)
        if (r.spectrum.covers(nm)) r.coating.uva_W_per_W += r.spectrum.values[static_cast<std::size_t>(nm - r.spectrum.first_nm)];
    r.spectrum.name = in.name;
    r.assessment = assess(r.spectrum, options);
    r.assessment.warnings.insert(r.assessment.warnings.end(), b.notes.begin(), b.notes.end());
    r.calibration = in.calibration;
    return r;
}

}  // namespace

BlendResult evaluate_blend(const BlendInput& in, const AssessOptions& options) {
    BlendResult r = evaluate_blend_at_weight(in, options);
    add_coating_optimum(in, r.coating);
    return r;
}

std::vector<BlendResult> coating_weight_sweep(const BlendInput& input, const std::vector<double>& weights, const AssessOptions& options) {
    if (input.excitation.kind != Excitation::Kind::mercury) throw Error("a coating-weight sweep applies to a mercury discharge only");
    std::vector<BlendResult> out;
    BlendInput in = input;
    for (double w : weights) {
        in.coating_weight_mg_per_cm2 = w;
        out.push_back(evaluate_blend_at_weight(in, options));
        if (!out.back().coating.modelled) throw Error("the coating model needs every component's density and d50");
    }
    CoatingResult optimum = out.front().coating;
    add_coating_optimum(input, optimum);
    for (auto& r : out) {
        r.coating.optimum_weight_mg_per_cm2 = optimum.optimum_weight_mg_per_cm2;
        r.coating.optimum_conversion = optimum.optimum_conversion;
    }
    return out;
}

}  // namespace lampwright
