#include "lampwright/phosphor/recipe.hpp"

#include "lampwright/phosphor/component_table.hpp"
#include "lampwright/phosphor/calibration_file.hpp"

#include "lampwright/core/interpolation.hpp"
#include "lampwright/io/spectrum_io.hpp"

#include <fmt/format.h>

#include <array>
#include <cmath>
#include <filesystem>

namespace lampwright {

namespace {


Excitation parse_excitation(const TomlDoc& doc) {
    const auto& r = doc.root();
    const auto* pump = doc.table(r, "pump", "");
    const auto ex = doc.number(r, "excitation_nm", "");
    if (pump && ex) doc.fail(r.get("excitation_nm"), "excitation_nm", "give either excitation_nm or [pump], not both");
    if (ex) {
        const double nm = *ex;
        if (nm < 1.0) doc.fail(r.get("excitation_nm"), "excitation_nm", fmt::format("{:g} looks like micrometres; give nanometres (253.7)", nm));
        if (nm > 1000.0) doc.fail(r.get("excitation_nm"), "excitation_nm", fmt::format("{:g} looks like angstroms; give nanometres (253.7)", nm));
        if (std::abs(nm - kMercuryResonanceNm) > 0.5) {
            if (nm >= 340 && nm <= 430)
                doc.fail(r.get("excitation_nm"), "excitation_nm", fmt::format("{:g} nm is an LED pump: write [pump] peak_nm = {:g} and fwhm_nm", nm, nm));
            doc.fail(r.get("excitation_nm"), "excitation_nm", fmt::format("{:g} nm is not supported: use 253.7 (mercury line) or an LED [pump]", nm));
        }
        return Excitation::mercury();
    }
    if (!pump) doc.fail(&r, "", "missing the excitation: excitation_nm = 253.7 or a [pump] table with peak_nm and fwhm_nm");
    doc.only_keys(*pump, {"peak_nm", "fwhm_nm", "power_W", "spectrum"}, "pump");
    // The blend model's pump is the Gaussian of peak_nm and fwhm_nm; a measured spectrum here
    // would be silently unused.
    if (pump->get("spectrum"))
        doc.fail(pump->get("spectrum"), "pump.spectrum",
                 "a recipe's pump is peak_nm and fwhm_nm; a measured pump spectrum is read only in an LED layer design (a TOML file with [layer])");
    const double peak = doc.require_number(*pump, "peak_nm", "pump");
    const double fwhm = doc.require_number(*pump, "fwhm_nm", "pump");
    if (peak < 1.0) doc.fail(pump->get("peak_nm"), "pump.peak_nm", fmt::format("{:g} looks like micrometres; give nanometres", peak));
    if (peak < 340 || peak > 430)
        doc.fail(pump->get("peak_nm"), "pump.peak_nm", fmt::format("{:g} nm is outside the UV/violet LED range 340-430 nm that the phosphor data cover", peak));
    if (!(fwhm > 0) || fwhm > 60) doc.fail(pump->get("fwhm_nm"), "pump.fwhm_nm", fmt::format("must lie in (0, 60] nm, not {:g}", fwhm));
    return Excitation::led(peak, fwhm);
}


}  // namespace

Recipe recipe_from_toml(const TomlDoc& doc, const std::vector<std::string>& extra_folders,
                        const std::vector<std::string>& extra_root_keys) {
    const auto& r = doc.root();
    std::vector<std::string> known{"name", "excitation_nm", "pump", "mercury_lines", "mercury_line_ratios", "lamp_type", "absorbed_fraction",
                                   "coating_weight_mg_per_cm2", "uv_185nm_fraction", "phosphor_folders", "component",
                                   "tolerance"};  // [tolerance]: phosphor/recipe_tolerance.hpp
    known.insert(known.end(), extra_root_keys.begin(), extra_root_keys.end());
    doc.only_keys(r, known, "");
    Recipe rec;
    rec.path = doc.source();
    rec.blend.name = doc.require_string(r, "name", "");
    rec.blend.excitation = parse_excitation(doc);
    if (auto f = doc.number(r, "mercury_lines", "")) {
        if (rec.blend.excitation.kind != Excitation::Kind::mercury)
            doc.fail(r.get("mercury_lines"), "mercury_lines", "only applies to a mercury discharge (excitation_nm = 253.7)");
        if (*f < 0 || *f >= 0.5)
            doc.fail(r.get("mercury_lines"), "mercury_lines", fmt::format("must be a fraction in [0, 0.5), not {:g} (percent?)", *f));
        rec.blend.mercury_line_fraction = *f;
    }
    if (const auto* ratios = doc.array(r, "mercury_line_ratios", "")) {
        if (rec.blend.excitation.kind != Excitation::Kind::mercury)
            doc.fail(ratios, "mercury_line_ratios", "only applies to a mercury discharge (excitation_nm = 253.7)");
        if (ratios->size() != 4)
            doc.fail(ratios, "mercury_line_ratios", fmt::format("must list 4 powers (404.7, 435.8, 546.1, 577+579 nm), not {}", ratios->size()));
        std::array<double, 4> v{};
        double total = 0;
        for (std::size_t k = 0; k < 4; ++k) {
            const auto x = ratios->get(k)->value<double>();
            if (!x || !(*x >= 0) || !std::isfinite(*x)) doc.fail(ratios->get(k), "mercury_line_ratios", "must be numbers >= 0");
            total += v[k] = *x;
        }
        if (!(total > 0)) doc.fail(ratios, "mercury_line_ratios", "must not all be zero");
        rec.blend.mercury_line_ratios = v;
    }
    if (auto t = doc.string(r, "lamp_type", "")) {
        if (rec.blend.excitation.kind != Excitation::Kind::mercury)
            doc.fail(r.get("lamp_type"), "lamp_type", "only applies to a mercury discharge (excitation_nm = 253.7)");
        if (*t != "halophosphate" && *t != "tri-band" && *t != "broadband")
            doc.fail(r.get("lamp_type"), "lamp_type", fmt::format("must be halophosphate, tri-band or broadband, not '{}'", *t));
        rec.blend.lamp_type = *t;
    }
    if (auto w = doc.number(r, "coating_weight_mg_per_cm2", "")) {
        if (rec.blend.excitation.kind != Excitation::Kind::mercury)
            doc.fail(r.get("coating_weight_mg_per_cm2"), "coating_weight_mg_per_cm2",
                     "only applies to a mercury discharge (excitation_nm = 253.7); an LED layer is described by its own design file");
        if (!(*w >= 0.1 && *w <= 50))
            doc.fail(r.get("coating_weight_mg_per_cm2"), "coating_weight_mg_per_cm2",
                     fmt::format("must be a coating weight of 0.1-50 mg/cm2, not {:g}", *w));
        rec.blend.coating_weight_mg_per_cm2 = *w;
    }
    if (auto f = doc.number(r, "uv_185nm_fraction", "")) {
        if (rec.blend.excitation.kind != Excitation::Kind::mercury)
            doc.fail(r.get("uv_185nm_fraction"), "uv_185nm_fraction", "only applies to a mercury discharge (excitation_nm = 253.7)");
        if (!(*f >= 0 && *f < 0.5))
            doc.fail(r.get("uv_185nm_fraction"), "uv_185nm_fraction",
                     fmt::format("must be the share of the UV photons at 184.9 nm, in [0, 0.5), not {:g} (percent?)", *f));
        rec.blend.uv_185nm_fraction = *f;
    }
    if (auto f = doc.number(r, "absorbed_fraction", "")) {
        if (rec.blend.excitation.kind == Excitation::Kind::mercury)
            doc.fail(r.get("absorbed_fraction"), "absorbed_fraction",
                     "applies to an LED pump only: for a mercury discharge the coating model gives the absorbed UV (set "
                     "coating_weight_mg_per_cm2 instead)");
        if (!(*f > 0 && *f <= 1)) doc.fail(r.get("absorbed_fraction"), "absorbed_fraction", fmt::format("must lie in (0, 1], not {:g}", *f));
        rec.blend.absorbed_fraction = *f;
    }
    for (const auto& folder : doc.strings(r, "phosphor_folders", "")) rec.phosphor_folders.push_back(path_relative_to(doc.source(), folder));
    rec.phosphor_folders.insert(rec.phosphor_folders.end(), extra_folders.begin(), extra_folders.end());
    const PhosphorLibrary library = rec.phosphor_folders.empty() ? PhosphorLibrary::builtin() : PhosphorLibrary::with_folders(rec.phosphor_folders);

    const toml::array& comps = component_array(doc, r);
    for (std::size_t i = 0; i < comps.size(); ++i) {
        std::string where;
        const toml::table* c = &component_table(doc, comps, i, where);
        doc.only_keys(*c, {"phosphor", "spectrum", "absorption", "quantum_efficiency", "mass_fraction", "label", "min_fraction", "max_fraction",
                           "density_g_per_cm3", "d50_um"},
                      where);
        BlendComponent bc;
        bc.mass_fraction = doc.require_number(*c, "mass_fraction", where);
        if (!(bc.mass_fraction > 0))
            doc.fail(c->get("mass_fraction"), key_path(where, "mass_fraction"), fmt::format("must be greater than zero, not {:g}", bc.mass_fraction));
        const bool measured = !doc.string(*c, "phosphor", where);
        bc.phosphor = component_phosphor(doc, *c, where, library, "needs 'phosphor' (a library id) or 'spectrum' (a measured emission CSV)");
        bc.label = bc.phosphor.id;
        if (measured) {
            bc.absorption = doc.number(*c, "absorption", where);
            bc.quantum_efficiency = doc.number(*c, "quantum_efficiency", where);
            if (!bc.absorption) doc.fail(c, where, "a measured 'spectrum' needs 'absorption' (relative, at the excitation)");
            if (!bc.quantum_efficiency) doc.fail(c, where, "a measured 'spectrum' needs 'quantum_efficiency'");
        }
        if (const auto a = doc.number(*c, "absorption", where); a && *a < 0)
            doc.fail(c->get("absorption"), key_path(where, "absorption"), "must not be negative");
        if (const auto a = doc.number(*c, "absorption", where)) bc.absorption = *a;
        if (const auto q = component_quantum_efficiency(doc, *c, where)) bc.quantum_efficiency = *q;
        if (auto label = doc.string(*c, "label", where)) bc.label = *label;
        for (const char* key : {"min_fraction", "max_fraction"}) {
            if (const auto v = doc.number(*c, key, where)) {
                if (*v < 0 || *v > 1)
                    doc.fail(c->get(key), key_path(where, key), fmt::format("must be a fraction in [0, 1], not {:g} (percent?)", *v));
                (std::string(key) == "min_fraction" ? bc.min_fraction : bc.max_fraction) = *v;
            }
        }
        // Grain data of this lot: density and median particle size vary from lot to lot.
        if (const auto v = doc.number(*c, "density_g_per_cm3", where)) {
            if (!(*v >= 0.5 && *v <= 12))
                doc.fail(c->get("density_g_per_cm3"), key_path(where, "density_g_per_cm3"), fmt::format("must be a density of 0.5-12 g/cm3, not {:g}", *v));
            bc.density_g_per_cm3 = *v;
        }
        if (const auto v = doc.number(*c, "d50_um", where)) {
            if (!(*v >= 0.05 && *v <= 200))
                doc.fail(c->get("d50_um"), key_path(where, "d50_um"), fmt::format("must be a median particle size of 0.05-200 um, not {:g}", *v));
            bc.d50_um = *v;
        }
        if (bc.min_fraction && bc.max_fraction && *bc.min_fraction > *bc.max_fraction)
            doc.fail(c->get("min_fraction"), key_path(where, "min_fraction"),
                     fmt::format("{:g} is above max_fraction {:g}", *bc.min_fraction, *bc.max_fraction));
        // Check the excitation against this phosphor's data now, so the error names the line.
        try {
            if (!bc.absorption) (void)absorption_for(bc.phosphor, rec.blend.excitation);
            if (!bc.quantum_efficiency) (void)quantum_efficiency_for(bc.phosphor, rec.blend.excitation);
            (void)emission_for_excitation(bc.phosphor, rec.blend.excitation);
        } catch (const InputError&) {
            throw;
        } catch (const Error& e) {
            doc.fail(c, where, e.what());
        }
        rec.blend.components.push_back(std::move(bc));
    }
    rec.tolerance = recipe_tolerance(doc, rec.blend.components.size());
    return rec;
}

// A recipe file; its `calibration` (a root key only files have: the path is relative to the file)
// applied to the blend when `calibrate` is true.
static Recipe read_recipe_file(const std::string& path, const std::vector<std::string>& extra_folders, bool calibrate) {
    const TomlDoc doc = TomlDoc::from_file(path);
    Recipe rec = recipe_from_toml(doc, extra_folders, {"calibration"});
    const auto name = doc.string(doc.root(), "calibration", "");
    if (!name) return rec;
    const toml::node* node = doc.root().get("calibration");
    const std::string file = path_relative_to(doc.source(), *name);
    if (!calibrate) {
        rec.notes.push_back(fmt::format("{}: calibration {} not applied (the uncalibrated model)", path, file));
        return rec;
    }
    if (rec.blend.excitation.kind != Excitation::Kind::mercury)
        doc.fail(node, "calibration", "a calibration is fitted on mercury discharge lamps; this recipe has an LED pump");
    if (!std::filesystem::is_regular_file(file)) doc.fail(node, "calibration", fmt::format("cannot read the calibration file '{}'", file));
    std::vector<bool> absorption_set;
    for (const auto& c : rec.blend.components) absorption_set.push_back(c.absorption.has_value());
    rec.notes = apply_calibration(load_calibration(file), rec.blend, absorption_set);
    return rec;
}

Recipe load_recipe(const std::string& path, const std::vector<std::string>& extra_folders) {
    return read_recipe_file(path, extra_folders, true);
}

std::string recipe_to_toml(const BlendInput& b, const std::vector<std::string>& header_comments) {
    std::string o;
    for (const auto& h : header_comments) o += "# " + h + "\n";
    o += fmt::format("name = {}\n", toml_quote(b.name));
    if (b.excitation.kind == Excitation::Kind::mercury) {
        o += fmt::format("excitation_nm = {:g}\n", b.excitation.peak_nm);
        if (b.mercury_line_fraction) o += fmt::format("mercury_lines = {:g}\n", *b.mercury_line_fraction);
        if (b.mercury_line_ratios)
            o += fmt::format("mercury_line_ratios = [{:g}, {:g}, {:g}, {:g}]\n", (*b.mercury_line_ratios)[0], (*b.mercury_line_ratios)[1],
                             (*b.mercury_line_ratios)[2], (*b.mercury_line_ratios)[3]);
        if (b.lamp_type) o += fmt::format("lamp_type = {}\n", toml_quote(*b.lamp_type));
        if (b.coating_weight_mg_per_cm2) o += fmt::format("coating_weight_mg_per_cm2 = {}\n", *b.coating_weight_mg_per_cm2);
        if (b.uv_185nm_fraction) o += fmt::format("uv_185nm_fraction = {}\n", *b.uv_185nm_fraction);
    }
    if (b.absorbed_fraction != 1.0) o += fmt::format("absorbed_fraction = {:g}\n", b.absorbed_fraction);
    if (b.excitation.kind == Excitation::Kind::led)
        o += fmt::format("\n[pump]\npeak_nm = {:g}\nfwhm_nm = {:g}\n", b.excitation.peak_nm, b.excitation.fwhm_nm);
    for (const auto& c : b.components) {
        o += "\n[[component]]\n";
        // An inline 'spectrum' component (no QE data of its own; a phosphor file always has some).
        // Its path is written absolute so the recipe loads from any folder.
        if (c.phosphor.emission_model == "measured" && !c.phosphor.qe_254nm && !c.phosphor.qe_365_405nm) {
            o += fmt::format("spectrum = {}\n", toml_quote(std::filesystem::absolute(c.phosphor.origin).lexically_normal().string()));
        } else {
            o += fmt::format("phosphor = {}\n", toml_quote(c.phosphor.id));
        }
        if (c.label != c.phosphor.id) o += fmt::format("label = {}\n", toml_quote(c.label));
        o += fmt::format("mass_fraction = {}\n", c.mass_fraction);  // shortest form that reads back exactly
        if (c.absorption) o += fmt::format("absorption = {:g}\n", *c.absorption);
        if (c.quantum_efficiency) o += fmt::format("quantum_efficiency = {:g}\n", *c.quantum_efficiency);
        if (c.min_fraction) o += fmt::format("min_fraction = {:g}\n", *c.min_fraction);
        if (c.max_fraction) o += fmt::format("max_fraction = {:g}\n", *c.max_fraction);
        if (c.density_g_per_cm3) o += fmt::format("density_g_per_cm3 = {}\n", *c.density_g_per_cm3);
        if (c.d50_um) o += fmt::format("d50_um = {}\n", *c.d50_um);
    }
    return o;
}

Recipe load_recipe_without_calibration(const std::string& path, const std::vector<std::string>& extra_folders) {
    return read_recipe_file(path, extra_folders, false);
}

}  // namespace lampwright
