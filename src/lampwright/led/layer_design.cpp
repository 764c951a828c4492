#include "lampwright/led/layer_design.hpp"

#include "lampwright/led/layer_calibration.hpp"

#include "lampwright/phosphor/blend.hpp"
#include "lampwright/phosphor/component_table.hpp"
#include "lampwright/core/interpolation.hpp"
#include "lampwright/io/spectrum_io.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <utility>

namespace lampwright {

namespace {


Spectrum read_one_spectrum(const TomlDoc& doc, const toml::node* node, const std::string& where, const std::string& path) {
    try {
        return read_single_spectrum(path);
    } catch (const InputError& e) {
        doc.fail(node, where, e.what());
    }
}

}  // namespace

bool is_layer_design(const TomlDoc& doc) { return doc.root().get("layer") != nullptr; }

LayerDesign layer_design_from_toml(const TomlDoc& doc, const std::vector<std::string>& extra_folders,
                                   const std::vector<std::string>& extra_root_keys, bool apply_calibration) {
    const auto& r = doc.root();
    std::vector<std::string> known{"name", "pump", "layer", "operating", "package", "phosphor_folders", "component", "calibration"};
    known.insert(known.end(), extra_root_keys.begin(), extra_root_keys.end());
    doc.only_keys(r, known, "");
    LayerDesign d;
    d.name = doc.require_string(r, "name", "");

    const auto* pump = doc.table(r, "pump", "");
    if (!pump) doc.fail(&r, "", "missing [pump] (peak_nm and fwhm_nm, or spectrum)");
    doc.only_keys(*pump, {"peak_nm", "fwhm_nm", "power_W", "spectrum", "peak_shift_nm_per_K", "fwhm_change_nm_per_K"}, "pump");
    const std::string range = fmt::format("the LED pump range {:g}-{:g} nm (near-UV, violet and blue InGaN LEDs)", kPumpMinNm, kPumpMaxNm);
    if (auto file = doc.string(*pump, "spectrum", "pump")) {
        // A measured pump replaces the Gaussian: a peak or width beside it would be silently unused.
        for (const char* k : {"peak_nm", "fwhm_nm"})
            if (pump->get(k))
                doc.fail(pump->get(k), key_path("pump", k),
                         fmt::format("give either a measured 'spectrum' or peak_nm and fwhm_nm, not both (the spectrum sets the pump's shape)"));
        d.pump_spectrum = read_one_spectrum(doc, pump->get("spectrum"), "pump.spectrum", path_relative_to(doc.source(), *file));
        const auto& v = d.pump_spectrum->values;
        const auto peak = static_cast<double>(std::max_element(v.begin(), v.end()) - v.begin()) + d.pump_spectrum->first_nm;
        d.pump = Excitation::led(peak, 0);
        if (peak < kPumpMinNm || peak > kPumpMaxNm) doc.fail(pump->get("spectrum"), "pump.spectrum", fmt::format("peaks at {:g} nm, outside {}", peak, range));
    } else {
        const double peak = doc.require_number(*pump, "peak_nm", "pump");
        const double fwhm = doc.require_number(*pump, "fwhm_nm", "pump");
        if (peak < 1.0) doc.fail(pump->get("peak_nm"), "pump.peak_nm", fmt::format("{:g} looks like micrometres; give nanometres", peak));
        if (peak < kPumpMinNm || peak > kPumpMaxNm) doc.fail(pump->get("peak_nm"), "pump.peak_nm", fmt::format("{:g} nm is outside {}", peak, range));
        if (!(fwhm > 0) || fwhm > 60) doc.fail(pump->get("fwhm_nm"), "pump.fwhm_nm", fmt::format("must lie in (0, 60] nm, not {:g}", fwhm));
        d.pump = Excitation::led(peak, fwhm);
    }
    if (auto p = doc.number(*pump, "power_W", "pump")) {
        if (!(*p > 0)) doc.fail(pump->get("power_W"), "pump.power_W", fmt::format("must be greater than zero, not {:g}", *p));
        if (*p > 1000) doc.fail(pump->get("power_W"), "pump.power_W", fmt::format("{:g} W is not an LED pump (mW given as W?)", *p));
        d.pump_power_W = *p;
    }
    // Drift with junction temperature, nm/K; bounds well beyond any InGaN LED (their sign is free:
    // a user may model a pump that is cooled or a band that narrows).
    for (auto [key, out] : {std::pair{"peak_shift_nm_per_K", &d.pump_peak_shift_nm_per_K}, std::pair{"fwhm_change_nm_per_K", &d.pump_fwhm_change_nm_per_K}})
        if (auto v = doc.number(*pump, key, "pump")) {
            if (!(std::abs(*v) <= 1.0)) doc.fail(pump->get(key), key_path("pump", key), fmt::format("must lie in [-1, 1] nm/K, not {:g}", *v));
            *out = *v;
        }

    const auto* layer = doc.table(r, "layer", "");
    if (!layer) doc.fail(&r, "", "missing [layer] with thickness_um");
    // The path factors of the earlier Beer-Lambert model have no meaning once scattering is modelled.
    for (const char* gone : {"pump_path_factor", "emission_path_factor"})
        if (layer->get(gone))
            doc.fail(layer->get(gone), key_path("layer", gone),
                     "is no longer used: the layer model now computes the light paths from the grains' scattering (README \"LED layer physics\"); remove it");
    doc.only_keys(*layer, {"thickness_um", "binder_density_g_per_cm3", "mass_absorption_cm2_per_g", "binder_index", "outside_index",
                           "scattering_asymmetry", "reflector_reflectance", "scattering_scale"}, "layer");
    d.thickness_um = doc.require_number(*layer, "thickness_um", "layer");
    if (d.thickness_um < 0) doc.fail(layer->get("thickness_um"), "layer.thickness_um", "must not be negative");
    if (d.thickness_um > 10000) doc.fail(layer->get("thickness_um"), "layer.thickness_um", fmt::format("{:g} um is over 1 cm: micrometres expected", d.thickness_um));
    auto positive = [&](const char* key, double& out) {
        if (auto v = doc.number(*layer, key, "layer")) {
            if (!(*v > 0)) doc.fail(layer->get(key), key_path("layer", key), fmt::format("must be greater than zero, not {:g}", *v));
            out = *v;
        }
    };
    positive("binder_density_g_per_cm3", d.binder_density_g_per_cm3);
    positive("mass_absorption_cm2_per_g", d.mass_absorption_cm2_per_g);
    if (auto v = doc.number(*layer, "scattering_scale", "layer")) {
        // Zero is allowed: a layer without scattering (the Beer-Lambert limit).
        if (!(*v >= 0 && *v <= 100))
            doc.fail(layer->get("scattering_scale"), "layer.scattering_scale", fmt::format("must lie in [0, 100] (a factor on the grains' scattering), not {:g}", *v));
        d.scattering_scale = *v;
    }
    auto in_range = [&](const char* key, double lo, double hi, double& out, const char* what) {
        if (auto v = doc.number(*layer, key, "layer")) {
            if (!(*v >= lo && *v <= hi)) doc.fail(layer->get(key), key_path("layer", key), fmt::format("must lie in [{:g}, {:g}] ({}), not {:g}", lo, hi, what, *v));
            out = *v;
        }
    };
    in_range("binder_index", 1.0, 2.5, d.binder_index, "a refractive index");
    in_range("outside_index", 1.0, 2.5, d.outside_index, "a refractive index: 1 for air");
    in_range("scattering_asymmetry", -0.99, 0.99, d.scattering_asymmetry, "the mean cosine of scattering");
    in_range("reflector_reflectance", 0.0, 1.0, d.reflector_reflectance, "a fraction");

    if (const auto* op = doc.table(r, "operating", "")) {
        doc.only_keys(*op, {"temperature_C", "junction_temperature_C"}, "operating");
        if (auto t = doc.number(*op, "temperature_C", "operating")) {
            if (*t < -60 || *t > 300) doc.fail(op->get("temperature_C"), "operating.temperature_C", fmt::format("{:g} degC is outside -60..300 (kelvin given?)", *t));
            d.temperature_C = *t;
        }
        if (auto t = doc.number(*op, "junction_temperature_C", "operating")) {
            if (*t < -60 || *t > 300)
                doc.fail(op->get("junction_temperature_C"), "operating.junction_temperature_C", fmt::format("{:g} degC is outside -60..300 (kelvin given?)", *t));
            d.junction_temperature_C = *t;
        }
    }

    if (const auto* pk = doc.table(r, "package", "")) {
        doc.only_keys(*pk, {"top", "dome_index", "chip_area_fraction", "chip_reflectance"}, "package");
        if (auto top = doc.string(*pk, "top", "package")) {
            if (*top == "dome") d.top = LayerDesign::Top::dome;
            else if (*top != "flat") doc.fail(pk->get("top"), "package.top", fmt::format("must be \"flat\" or \"dome\", not \"{}\"", *top));
        }
        if (auto v = doc.number(*pk, "dome_index", "package")) {
            if (d.top != LayerDesign::Top::dome) doc.fail(pk->get("dome_index"), "package.dome_index", "needs top = \"dome\"");
            if (!(*v >= 1.0 && *v <= 2.5)) doc.fail(pk->get("dome_index"), "package.dome_index", fmt::format("must lie in [1, 2.5] (a refractive index), not {:g}", *v));
            d.dome_index = *v;
        }
        for (auto [key, out] : {std::pair{"chip_area_fraction", &d.chip_area_fraction}, std::pair{"chip_reflectance", &d.chip_reflectance}})
            if (auto v = doc.number(*pk, key, "package")) {
                if (!(*v >= 0 && *v <= 1)) doc.fail(pk->get(key), key_path("package", key), fmt::format("must lie in [0, 1] (a fraction), not {:g}", *v));
                *out = *v;
            }
    }

    std::vector<std::string> folders;
    for (const auto& f : doc.strings(r, "phosphor_folders", "")) folders.push_back(path_relative_to(doc.source(), f));
    folders.insert(folders.end(), extra_folders.begin(), extra_folders.end());
    const PhosphorLibrary library = folders.empty() ? PhosphorLibrary::builtin() : PhosphorLibrary::with_folders(folders);

    const toml::array& components = component_array(doc, r);
    const toml::array* comps = &components;
    double total = 0;
    for (std::size_t i = 0; i < comps->size(); ++i) {
        std::string where;
        const toml::table* c = &component_table(doc, components, i, where);
        doc.only_keys(*c, {"phosphor", "spectrum", "absorption_spectrum", "quantum_efficiency", "loading", "label", "min_loading", "max_loading",
                           "brightness_factor"}, where);
        LayerComponent lc;
        lc.loading = doc.require_number(*c, "loading", where);
        if (!(lc.loading > 0) || lc.loading >= 1)
            doc.fail(c->get("loading"), key_path(where, "loading"), fmt::format("must be a mass fraction in (0, 1), not {:g} (percent?)", lc.loading));
        total += lc.loading;
        const bool measured = !doc.string(*c, "phosphor", where);
        lc.phosphor = component_phosphor(doc, *c, where, library,
                                         "needs 'phosphor' (a library id) or 'spectrum' + 'absorption_spectrum' + 'quantum_efficiency'");
        if (measured) {
            const auto abs_file = doc.string(*c, "absorption_spectrum", where);
            if (!abs_file) doc.fail(c, where, "a measured 'spectrum' needs 'absorption_spectrum' (CSV of relative absorption per unit mass)");
            const Spectrum a = read_one_spectrum(doc, c->get("absorption_spectrum"), key_path(where, "absorption_spectrum"), path_relative_to(doc.source(), *abs_file));
            for (std::size_t k = 0; k < a.values.size(); ++k) {
                lc.phosphor.absorption_nm.push_back(a.first_nm + static_cast<double>(k));
                lc.phosphor.absorption_rel.push_back(std::max(0.0, a.values[k]));
            }
            if (!doc.number(*c, "quantum_efficiency", where)) doc.fail(c, where, "a measured 'spectrum' needs 'quantum_efficiency'");
        }
        if (auto q = component_quantum_efficiency(doc, *c, where)) lc.quantum_efficiency = *q;
        lc.label = doc.string(*c, "label", where).value_or(lc.phosphor.id);
        if (auto v = doc.number(*c, "brightness_factor", where)) {
            if (!(*v > 0) || *v > 20)
                doc.fail(c->get("brightness_factor"), key_path(where, "brightness_factor"), fmt::format("must be a factor above 0 and at most 20, not {:g}", *v));
            lc.brightness_factor = *v;
        }
        // Limits for the fit, as mass fractions of the layer like the loading itself.
        if (auto v = doc.number(*c, "min_loading", where)) {
            if (*v < 0 || *v >= 1)
                doc.fail(c->get("min_loading"), key_path(where, "min_loading"), fmt::format("must be a mass fraction in [0, 1), not {:g} (percent?)", *v));
            lc.min_loading = *v;
        }
        if (auto v = doc.number(*c, "max_loading", where)) {
            if (!(*v > 0) || *v >= 1)
                doc.fail(c->get("max_loading"), key_path(where, "max_loading"), fmt::format("must be a mass fraction in (0, 1), not {:g} (percent?)", *v));
            lc.max_loading = *v;
        }
        if (lc.min_loading && lc.max_loading && *lc.min_loading > *lc.max_loading)
            doc.fail(c->get("min_loading"), key_path(where, "min_loading"),
                     fmt::format("{:g} is above max_loading {:g}", *lc.min_loading, *lc.max_loading));
        try {
            (void)absorption_for(lc.phosphor, d.pump.fwhm_nm > 0 ? d.pump : Excitation::led(d.pump.peak_nm, 1.0));
            if (!lc.quantum_efficiency) (void)quantum_efficiency_for(lc.phosphor, d.pump);
            (void)emission_for_excitation(lc.phosphor, d.pump);
        } catch (const InputError&) {
            throw;
        } catch (const Error& e) {
            doc.fail(c, where, e.what());
        }
        d.components.push_back(std::move(lc));
    }
    if (total >= 1) doc.fail(comps, "component", fmt::format("loadings add up to {:g}; they must sum below 1 (the rest is binder)", total));
    if (auto file = doc.string(r, "calibration", "")) {
        const std::string path = path_relative_to(doc.source(), *file);
        if (!std::filesystem::exists(path))
            doc.fail(r.get("calibration"), "calibration", fmt::format("the layer calibration file {} does not exist", path));
        // Errors inside the calibration file name that file, its line and key.
        const LayerModelCalibration cal = load_layer_calibration(path);
        if (apply_calibration) {
            d.calibration_notes = apply_layer_calibration(cal, d);
        } else {
            d.calibration_notes.push_back(fmt::format("the design's calibration {} is not applied here", path));
        }
    }
    return d;
}

LayerDesign load_layer_design(const std::string& path, const std::vector<std::string>& extra_folders) {
    const TomlDoc doc = TomlDoc::from_file(path);
    return layer_design_from_toml(doc, extra_folders);
}

std::string layer_design_to_toml(const LayerDesign& d) {
    std::string o = fmt::format("name = {}\n\n[pump]\n", toml_quote(d.name));
    o += fmt::format("peak_nm = {:g}\nfwhm_nm = {:g}\npower_W = {:g}\n", d.pump.peak_nm, d.pump.fwhm_nm, d.pump_power_W);
    o += fmt::format("peak_shift_nm_per_K = {:g}\nfwhm_change_nm_per_K = {:g}\n", d.pump_peak_shift_nm_per_K, d.pump_fwhm_change_nm_per_K);
    o += fmt::format("\n[layer]\nthickness_um = {:.3f}\nbinder_density_g_per_cm3 = {:g}\nmass_absorption_cm2_per_g = {:g}\n"
                     "binder_index = {:g}\noutside_index = {:g}\nscattering_asymmetry = {:g}\nreflector_reflectance = {:g}\n",
                     d.thickness_um, d.binder_density_g_per_cm3, d.mass_absorption_cm2_per_g, d.binder_index, d.outside_index,
                     d.scattering_asymmetry, d.reflector_reflectance);
    // A calibrated design is written with the calibration folded in (kappa, scattering_scale,
    // brightness_factor), so the file stands alone; the calibration's path goes in a comment.
    if (d.scattering_scale != 1.0) o += fmt::format("scattering_scale = {}\n", d.scattering_scale);
    if (!d.calibration.empty()) o += fmt::format("# calibrated with {} (applied in the values above)\n", d.calibration);
    o += fmt::format("\n[operating]\ntemperature_C = {:g}\n", d.temperature_C);
    if (d.junction_temperature_C) o += fmt::format("junction_temperature_C = {:g}\n", *d.junction_temperature_C);
    o += fmt::format("\n[package]\ntop = \"{}\"\n", d.top == LayerDesign::Top::dome ? "dome" : "flat");
    if (d.dome_index) o += fmt::format("dome_index = {:g}\n", *d.dome_index);
    o += fmt::format("chip_area_fraction = {:g}\nchip_reflectance = {:g}\n", d.chip_area_fraction, d.chip_reflectance);
    for (const auto& c : d.components) {
        o += "\n[[component]]\n";
        o += fmt::format("phosphor = {}\n", toml_quote(c.phosphor.id));
        if (c.label != c.phosphor.id) o += fmt::format("label = {}\n", toml_quote(c.label));
        o += fmt::format("loading = {:.6f}\n", c.loading);
        if (c.quantum_efficiency) o += fmt::format("quantum_efficiency = {:g}\n", *c.quantum_efficiency);
        if (c.brightness_factor != 1.0) o += fmt::format("brightness_factor = {}\n", c.brightness_factor);
        if (c.min_loading) o += fmt::format("min_loading = {:g}\n", *c.min_loading);
        if (c.max_loading) o += fmt::format("max_loading = {:g}\n", *c.max_loading);
    }
    return o;
}

}  // namespace lampwright
