#include "lampwright/phosphor/phosphor.hpp"

#include "lampwright/core/embedded_data.hpp"
#include "lampwright/core/interpolation.hpp"
#include "lampwright/colour/spectral_features.hpp"
#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/io/spectrum_io.hpp"
#include "lampwright/io/toml_access.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <numbers>

namespace lampwright {

namespace {

constexpr double kFwhmToSigma = 2.0 * 1.1774100225154747;  // FWHM = 2 sqrt(2 ln 2) sigma

void add_normalised(Spectrum& total, const std::vector<double>& shape, double weight) {
    double sum = 0;
    for (double v : shape) sum += v;
    if (!(sum > 0)) return;
    for (std::size_t i = 0; i < shape.size(); ++i) total.values[i] += weight * shape[i] / sum;
}

// A 4f-5d band: Gaussian in wavenumber whose power-per-nm maximum falls on peak_nm
// (data/phosphors/README.md gives the derivation).
std::vector<double> band_photons_per_nm(const EmissionBand& b, double shift_nm, double width_scale) {
    const double peak = b.peak_nm + shift_nm;
    const double fwhm = b.fwhm_nm * width_scale;
    const double nu_p = 1e7 / peak;
    const double dnu = 1e7 / (peak - fwhm / 2) - 1e7 / (peak + fwhm / 2);
    const double sigma = dnu / kFwhmToSigma;
    const double nu0 = nu_p - 3 * sigma * sigma / nu_p;
    std::vector<double> out;
    for (int nm = kEmissionFirstNm; nm <= kEmissionLastNm; ++nm) {
        const double nu = 1e7 / nm;
        out.push_back(std::exp(-0.5 * std::pow((nu - nu0) / sigma, 2)) * 1e7 / (static_cast<double>(nm) * nm));
    }
    return out;
}

std::vector<double> line_photons_per_nm(double centre_nm, double fwhm_nm) {
    const double sigma = fwhm_nm / kFwhmToSigma;
    std::vector<double> out;
    for (int nm = kEmissionFirstNm; nm <= kEmissionLastNm; ++nm) out.push_back(std::exp(-0.5 * std::pow((nm - centre_nm) / sigma, 2)));
    return out;
}

void require_positive(const TomlDoc& doc, const toml::table& t, const std::string& key, const std::string& where, double v) {
    if (!(v > 0)) doc.fail(t.get(key), key_path(where, key), fmt::format("must be greater than zero, not {:g}", v));
}

// A measured emission spectrum, refused (InputError naming the file) when it has no power on the
// emission grid: all of it would be cut off and the phosphor would give no light.
Spectrum read_emission_file(const std::string& path) {
    Spectrum s = read_single_spectrum(path);
    double on_grid = 0;
    for (int nm = kEmissionFirstNm; nm <= kEmissionLastNm; ++nm)
        if (s.covers(nm)) on_grid += std::max(0.0, s.values[static_cast<std::size_t>(nm - s.first_nm)]);
    if (!(on_grid > 0))
        throw InputError(path, 0, fmt::format("the emission spectrum has no power on the emission grid {}-{} nm", kEmissionFirstNm, kEmissionLastNm));
    return s;
}

}  // namespace

Spectrum emission_grid(const std::string& name) { return {name, kEmissionFirstNm, std::vector<double>(kEmissionGridSize, 0.0)}; }

Spectrum photons_from_power(const Spectrum& power) {
    Spectrum n = emission_grid(power.name);
    double sum = 0;
    for (int nm = kEmissionFirstNm; nm <= kEmissionLastNm; ++nm) {
        if (!power.covers(nm)) continue;
        const double v = std::max(0.0, power.values[static_cast<std::size_t>(nm - power.first_nm)]) * nm;
        n.values[static_cast<std::size_t>(nm - kEmissionFirstNm)] = v;
        sum += v;
    }
    if (!(sum > 0)) throw Error(fmt::format("spectrum '{}' has no power on {}-{} nm", power.name, kEmissionFirstNm, kEmissionLastNm));
    for (double& v : n.values) v /= sum;
    return n;
}

double mean_inverse_wavelength(const Spectrum& photons) {
    double m = 0;
    for (std::size_t k = 0; k < photons.values.size(); ++k) m += photons.values[k] / (photons.first_nm + static_cast<double>(k));
    return m;
}

Spectrum power_from_photons(const Spectrum& photons) {
    Spectrum p = photons;
    const double total = mean_inverse_wavelength(photons);
    for (std::size_t k = 0; k < p.values.size(); ++k) p.values[k] = photons.values[k] / (photons.first_nm + static_cast<double>(k)) / total;
    return p;
}

Spectrum emission_photons(const Phosphor& p, double shift_nm, double width_scale) {
    if (p.emission_model == "measured") {
        Spectrum n = photons_from_power(p.measured_power);
        n.name = p.id;
        return n;
    }
    Spectrum out = emission_grid(p.id);
    if (p.emission_model == "bands") {
        for (const auto& b : p.bands) add_normalised(out, band_photons_per_nm(b, shift_nm, width_scale), b.weight);
    } else if (p.emission_model == "lines") {
        for (const auto& l : p.lines)
            add_normalised(out, line_photons_per_nm(l.nm + shift_nm, l.fwhm_nm > 0 ? l.fwhm_nm : p.line_fwhm_nm), l.weight);
    }
    double sum = 0;
    for (double v : out.values) sum += v;
    for (double& v : out.values) v /= sum;
    return out;
}

std::optional<double> absorption_at(const Phosphor& p, double nm) {
    if (p.absorption_nm.empty() || nm < p.absorption_nm.front() - 1e-9 || nm > p.absorption_nm.back() + 1e-9) return std::nullopt;
    return interpolate_linear(p.absorption_nm, p.absorption_rel, nm);
}

double thermal_factor(const Phosphor& p, double temperature_C) {
    if (p.quench_C.empty()) return 1.0;
    return interpolate_linear(p.quench_C, p.quench_rel, temperature_C);
}

std::optional<std::string> missing_thermal_data_warning(const Phosphor& p, double temperature_C) {
    if (!p.quench_C.empty() || temperature_C == kThermalReferenceC) return std::nullopt;
    return fmt::format("no quenching data for {}: treated as constant with temperature", p.id);
}

std::optional<std::string> missing_peak_shift_warning(const Phosphor& p, double temperature_C) {
    if (p.emission_model != "bands" || p.peak_shift_given || temperature_C == kThermalReferenceC) return std::nullopt;
    return fmt::format("no peak-shift data for {}: its bands held at their 25 degC position", p.id);
}

EmissionSummary emission_summary(const Phosphor& p) {
    const Spectrum power = power_from_photons(emission_photons(p));
    const auto f = spectral_features(power, chromaticity(tristimulus(power)));
    return {f.peak_nm, f.fwhm_nm, f.centroid_nm};
}

Phosphor phosphor_from_emission_file(const std::string& path) {
    Phosphor p;
    p.id = file_stem(path);
    p.origin = path;
    p.emission_model = "measured";
    p.measured_power = read_emission_file(path);
    return p;
}

Phosphor parse_phosphor(const std::string& text, const std::string& origin) {
    const TomlDoc doc(text, origin);
    const auto& r = doc.root();
    doc.only_keys(r, {"id", "abbreviation", "name", "use", "lamp_family", "body_colour", "model_note", "density", "grain", "emission", "absorption",
                      "quantum_efficiency", "thermal"}, "");
    Phosphor p;
    p.origin = origin;
    p.id = doc.require_string(r, "id", "");
    if (p.id.empty()) doc.fail(r.get("id"), "id", "must not be empty");
    p.abbreviation = doc.string(r, "abbreviation", "").value_or("");
    p.name = doc.string(r, "name", "").value_or("");
    p.body_colour = doc.string(r, "body_colour", "").value_or("");
    p.model_note = doc.string(r, "model_note", "").value_or("");
    p.use = doc.strings(r, "use", "");
    for (const auto& u : p.use)
        if (u != "lamp" && u != "led") doc.fail(r.get("use"), "use", fmt::format("items must be \"lamp\" or \"led\", not \"{}\"", u));
    p.lamp_family = doc.string(r, "lamp_family", "").value_or("");
    if (!p.lamp_family.empty() && p.lamp_family != "halophosphate")
        doc.fail(r.get("lamp_family"), "lamp_family", fmt::format("must be \"halophosphate\" (or left out), not \"{}\"", p.lamp_family));

    if (const auto* d = doc.table(r, "density", "")) {
        doc.only_keys(*d, {"g_per_cm3", "source"}, "density");
        p.density_g_per_cm3 = doc.require_number(*d, "g_per_cm3", "density");
        require_positive(doc, *d, "g_per_cm3", "density", p.density_g_per_cm3);
        p.density_source = doc.string(*d, "source", "density").value_or("");
    }

    if (const auto* g = doc.table(r, "grain", "")) {
        doc.only_keys(*g, {"d50_um", "reflectance_at_254nm", "refractive_index", "source"}, "grain");
        p.d50_um = doc.require_number(*g, "d50_um", "grain");
        if (!(p.d50_um >= 0.05 && p.d50_um <= 200))
            doc.fail(g->get("d50_um"), "grain.d50_um", fmt::format("must be a median particle size of 0.05-200 um, not {:g}", p.d50_um));
        p.reflectance_254nm = doc.number(*g, "reflectance_at_254nm", "grain").value_or(0.0);
        if (!(p.reflectance_254nm >= 0 && p.reflectance_254nm < 1))
            doc.fail(g->get("reflectance_at_254nm"), "grain.reflectance_at_254nm",
                     fmt::format("must be a fraction in [0, 1), not {:g}", p.reflectance_254nm));
        if (auto n = doc.number(*g, "refractive_index", "grain")) {
            // Inorganic phosphor hosts lie between about 1.3 (fluorides) and 2.5 (oxides of heavy metals).
            if (!(*n >= 1.0 && *n <= 3.5))
                doc.fail(g->get("refractive_index"), "grain.refractive_index", fmt::format("must lie in [1, 3.5], not {:g}", *n));
            p.refractive_index = *n;
        }
        p.grain_source = doc.string(*g, "source", "grain").value_or("");
    }

    const auto* e = doc.table(r, "emission", "");
    if (!e) doc.fail(&r, "", "missing table [emission]");
    doc.only_keys(*e, {"model", "bands", "lines", "line_fwhm_nm", "file", "source"}, "emission");
    p.emission_model = doc.require_string(*e, "model", "emission");
    p.emission_source = doc.string(*e, "source", "emission").value_or("");
    if (p.emission_model == "bands") {
        const auto* bands = doc.array(*e, "bands", "emission");
        if (!bands || bands->empty()) doc.fail(e, "emission", "model \"bands\" needs a non-empty 'bands' array");
        for (std::size_t i = 0; i < bands->size(); ++i) {
            const auto* b = bands->get(i)->as_table();
            const std::string where = fmt::format("emission.bands[{}]", i + 1);
            if (!b) doc.fail(bands->get(i), where, "must be { peak_nm = ..., fwhm_nm = ..., weight = ... }");
            doc.only_keys(*b, {"peak_nm", "fwhm_nm", "weight"}, where);
            EmissionBand band{doc.require_number(*b, "peak_nm", where), doc.require_number(*b, "fwhm_nm", where),
                              doc.number(*b, "weight", where).value_or(1.0)};
            require_positive(doc, *b, "fwhm_nm", where, band.fwhm_nm);
            require_positive(doc, *b, "weight", where, band.weight);
            if (band.peak_nm < kEmissionFirstNm || band.peak_nm > kEmissionLastNm || band.fwhm_nm >= band.peak_nm)
                doc.fail(b->get("peak_nm"), key_path(where, "peak_nm"),
                         fmt::format("peak {:g} nm / FWHM {:g} nm is not a band the emission grid {}-{} nm holds (nm expected)", band.peak_nm,
                                     band.fwhm_nm, kEmissionFirstNm, kEmissionLastNm));
            p.bands.push_back(band);
        }
    } else if (p.emission_model == "lines") {
        // One width for every line, or a width per line (lines derived from measured lamps have their own).
        p.line_fwhm_nm = doc.number(*e, "line_fwhm_nm", "emission").value_or(0.0);
        if (e->get("line_fwhm_nm")) require_positive(doc, *e, "line_fwhm_nm", "emission", p.line_fwhm_nm);
        const auto* lines = doc.array(*e, "lines", "emission");
        if (!lines || lines->empty()) doc.fail(e, "emission", "model \"lines\" needs a non-empty 'lines' array");
        for (std::size_t i = 0; i < lines->size(); ++i) {
            const auto* l = lines->get(i)->as_table();
            const std::string where = fmt::format("emission.lines[{}]", i + 1);
            if (!l) doc.fail(lines->get(i), where, "must be { nm = ..., weight = ... }");
            doc.only_keys(*l, {"nm", "weight", "fwhm_nm"}, where);
            EmissionLine line{doc.require_number(*l, "nm", where), doc.number(*l, "weight", where).value_or(1.0),
                              doc.number(*l, "fwhm_nm", where).value_or(0.0)};
            require_positive(doc, *l, "weight", where, line.weight);
            if (l->get("fwhm_nm")) require_positive(doc, *l, "fwhm_nm", where, line.fwhm_nm);
            if (line.fwhm_nm == 0 && p.line_fwhm_nm == 0)
                doc.fail(l, where, "has no width: give fwhm_nm here or line_fwhm_nm for all lines in [emission]");
            // Outside the grid the line would be lost and the peak listed at the grid's edge.
            if (line.nm < kEmissionFirstNm || line.nm > kEmissionLastNm)
                doc.fail(l->get("nm"), key_path(where, "nm"),
                         fmt::format("{:g} nm is outside the emission grid {}-{} nm", line.nm, kEmissionFirstNm, kEmissionLastNm));
            p.lines.push_back(line);
        }
    } else if (p.emission_model == "measured") {
        const std::string file = doc.require_string(*e, "file", "emission");
        const auto path = path_relative_to(origin, file);
        try {
            p.measured_power = read_emission_file(path);
        } catch (const InputError& err) {
            doc.fail(e->get("file"), "emission.file", err.what());
        }
    } else {
        doc.fail(e->get("model"), "emission.model", "must be \"bands\", \"lines\" or \"measured\"");
    }

    const auto* a = doc.table(r, "absorption", "");
    if (!a) doc.fail(&r, "", "missing table [absorption]");
    doc.only_keys(*a, {"points", "source"}, "absorption");
    doc.pairs(*a, "points", "absorption", p.absorption_nm, p.absorption_rel);
    for (double v : p.absorption_rel)
        if (v < 0) doc.fail(a->get("points"), "absorption.points", "relative absorption must not be negative");
    p.absorption_source = doc.string(*a, "source", "absorption").value_or("");

    const auto* q = doc.table(r, "quantum_efficiency", "");
    if (!q) doc.fail(&r, "", "missing table [quantum_efficiency]");
    doc.only_keys(*q, {"at_254nm", "at_185nm", "at_365_405nm", "source"}, "quantum_efficiency");
    p.qe_254nm = doc.number(*q, "at_254nm", "quantum_efficiency");
    p.qe_185nm = doc.number(*q, "at_185nm", "quantum_efficiency");
    p.qe_365_405nm = doc.number(*q, "at_365_405nm", "quantum_efficiency");
    for (const char* k : {"at_254nm", "at_185nm", "at_365_405nm"}) {
        const auto v = doc.number(*q, k, "quantum_efficiency");
        if (v && (*v <= 0 || *v > 1))
            doc.fail(q->get(k), key_path("quantum_efficiency", k), fmt::format("must be a fraction in (0, 1], not {:g} (percent?)", *v));
    }
    if (!p.qe_254nm && !p.qe_365_405nm) doc.fail(q, "quantum_efficiency", "needs at_254nm or at_365_405nm");
    if (p.qe_185nm && !p.qe_254nm) doc.fail(q->get("at_185nm"), "quantum_efficiency.at_185nm", "needs at_254nm too (both lines of the discharge)");
    p.qe_source = doc.string(*q, "source", "quantum_efficiency").value_or("");

    if (const auto* t = doc.table(r, "thermal", "")) {
        doc.only_keys(*t, {"quenching", "peak_shift_nm_per_K", "source"}, "thermal");
        if (t->get("quenching")) doc.pairs(*t, "quenching", "thermal", p.quench_C, p.quench_rel);
        for (double v : p.quench_rel)
            if (v < 0 || v > 1.5) doc.fail(t->get("quenching"), "thermal.quenching", "relative QE values must lie in 0..1.5");
        const auto shift = doc.number(*t, "peak_shift_nm_per_K", "thermal");
        p.peak_shift_nm_per_K = shift.value_or(0.0);
        p.peak_shift_given = shift.has_value();
        p.thermal_source = doc.string(*t, "source", "thermal").value_or("");
    }
    return p;
}

const PhosphorLibrary& PhosphorLibrary::builtin() {
    static const PhosphorLibrary lib = [] {
        PhosphorLibrary l;
        for (const auto& f : embedded_files())
            if (f.path.starts_with("phosphors/") && f.path.ends_with(".toml"))
                l.add(parse_phosphor(std::string(f.content), "data/" + std::string(f.path)));
        // Sorted by emission peak, each peak computed once (not in every comparison); the same
        // std::sort over the same keys, so the order of equal peaks is as before.
        struct Keyed {
            double peak_nm;
            Phosphor p;
        };
        std::vector<Keyed> keyed;
        keyed.reserve(l.phosphors_.size());
        for (auto& p : l.phosphors_) {
            const double peak = emission_summary(p).peak_nm;
            keyed.push_back({peak, std::move(p)});
        }
        std::sort(keyed.begin(), keyed.end(), [](const Keyed& a, const Keyed& b) { return a.peak_nm < b.peak_nm; });
        l.phosphors_.clear();
        for (auto& k : keyed) l.phosphors_.push_back(std::move(k.p));
        return l;
    }();
    return lib;
}

PhosphorLibrary PhosphorLibrary::with_folders(const std::vector<std::string>& folders) {
    PhosphorLibrary lib = builtin();
    for (const auto& folder : folders) {
        std::error_code ec;
        if (!std::filesystem::is_directory(folder, ec)) throw InputError(folder, 0, "phosphor folder does not exist");
        std::vector<std::filesystem::path> files;
        for (const auto& entry : std::filesystem::directory_iterator(folder))
            if (entry.path().extension() == ".toml") files.push_back(entry.path());
        std::sort(files.begin(), files.end());
        for (const auto& f : files) lib.add(parse_phosphor(read_text_file(f.string()), f.string()));
    }
    return lib;
}

void PhosphorLibrary::add(Phosphor p) {
    if (const Phosphor* existing = try_find(p.id); existing && existing->id == p.id)
        throw InputError(p.origin, 0, fmt::format("phosphor id '{}' is already defined in {}", p.id, existing->origin));
    phosphors_.push_back(std::move(p));
}

const Phosphor* PhosphorLibrary::try_find(const std::string& key) const {
    for (const auto& p : phosphors_)
        if (p.id == key) return &p;
    const Phosphor* match = nullptr;
    for (const auto& p : phosphors_)
        if (!p.abbreviation.empty() && p.abbreviation == key) {
            if (match) return nullptr;  // ambiguous
            match = &p;
        }
    return match;
}

const Phosphor& PhosphorLibrary::find(const std::string& key) const {
    if (const Phosphor* p = try_find(key)) return *p;
    std::vector<std::string> near;
    auto lower = [](std::string s) {
        std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return std::tolower(c); });
        return s;
    };
    const std::string k = lower(key);
    int abbreviation_hits = 0;
    for (const auto& p : phosphors_) {
        if (p.abbreviation == key) ++abbreviation_hits;
        const std::string id = lower(p.id), ab = lower(p.abbreviation);
        if (p.abbreviation == key || (!k.empty() && (id.find(k) != std::string::npos || k.find(id) != std::string::npos ||
                                                     (!ab.empty() && ab == k))))
            near.push_back(p.id);
    }
    std::string list;
    for (const auto& n : near) list += (list.empty() ? "" : "; ") + n;
    if (abbreviation_hits > 1) throw Error(fmt::format("'{}' names several phosphors ({}): give the full id", key, list));
    if (!near.empty()) throw Error(fmt::format("no phosphor '{}' in the library; did you mean: {}", key, list));
    throw Error(fmt::format("no phosphor '{}' in the library (see 'lampwright phosphors' for the ids)", key));
}

}  // namespace lampwright
