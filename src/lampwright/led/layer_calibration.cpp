#include "lampwright/led/layer_calibration.hpp"

#include "lampwright/core/bandpass.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/phosphor/calibration_file.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>

namespace lampwright {

namespace {

// Bounds of the scales (two decades either way of the data's kappa and anomalous-diffraction
// mu_s) and of a brightness factor (below it a phosphor hardly converts; above, the QE at 25 degC
// would exceed 1 and be capped, leaving the residual flat).
constexpr double kScaleLower = 1e-2, kScaleUpper = 1e2;
constexpr double kBrightnessLower = 0.05;
constexpr double kSpectrumScaleLower = 1e-6, kSpectrumScaleUpper = 1e6;
// The part of a measurement the residual uses: the visible range and the pumps' (360-470 nm).
constexpr int kFirstNm = 360, kLastNm = 830;

// The layer's QE at 25 degC before any factor (the cap of 1 included), per component.
double qe_at_room(const LayerDesign& d, std::size_t i) {
    LayerDesign one = d;
    for (auto& c : one.components) c.brightness_factor = 1;
    return layer_medium(one, kRoomTemperatureC).components.at(i).quantum_efficiency;
}

// A number that must be greater than zero, at most `hi`.
double positive_key(const TomlDoc& doc, const toml::table& t, const std::string& key, const std::string& where, double hi) {
    const double v = doc.require_number(t, key, where);
    if (!(v > 0) || v > hi) doc.fail(t.get(key), key_path(where, key), fmt::format("must be a factor above 0 and at most {:g}, not {:g}", hi, v));
    return v;
}

}  // namespace

const LayerCalibratedPhosphor* LayerModelCalibration::phosphor(const std::string& id) const {
    for (const auto& p : phosphors)
        if (p.id == id) return &p;
    return nullptr;
}

LayerModelCalibration layer_calibration_from_toml(const TomlDoc& doc) {
    const auto& r = doc.root();
    doc.only_keys(r, {"format", "mass_absorption_scale", "mass_absorption_scale_sd", "scattering_scale", "scattering_scale_sd", "reference", "phosphor"}, "");
    const std::string format = doc.require_string(r, "format", "");
    if (format != kLayerCalibrationFormat)
        doc.fail(r.get("format"), "format",
                 fmt::format("must be \"{}\" (a file written by lampwright calibrate on LED modules), not \"{}\"", kLayerCalibrationFormat, format));
    LayerModelCalibration cal;
    cal.path = doc.source();
    cal.mass_absorption_scale = positive_key(doc, r, "mass_absorption_scale", "", kScaleUpper);
    cal.mass_absorption_scale_sd = calibration_sd(doc, r, "mass_absorption_scale_sd", "");
    cal.scattering_scale = positive_key(doc, r, "scattering_scale", "", kScaleUpper);
    cal.scattering_scale_sd = calibration_sd(doc, r, "scattering_scale_sd", "");
    cal.reference = doc.string(r, "reference", "").value_or("");
    {
        const auto tables = calibration_tables(doc, r, "phosphor");
        for (std::size_t i = 0; i < tables.size(); ++i) {
            const std::string where = fmt::format("phosphor[{}]", i + 1);
            const toml::table* t = tables[i];
            doc.only_keys(*t, {"id", "brightness_factor", "brightness_factor_sd"}, where);
            LayerCalibratedPhosphor p;
            p.id = doc.require_string(*t, "id", where);
            if (p.id.empty()) doc.fail(t->get("id"), key_path(where, "id"), "must name a phosphor");
            if (cal.phosphor(p.id)) doc.fail(t->get("id"), key_path(where, "id"), fmt::format("'{}' is listed twice", p.id));
            p.brightness_factor = positive_key(doc, *t, "brightness_factor", where, 1.0 / kBrightnessLower);
            p.sd = calibration_sd(doc, *t, "brightness_factor_sd", where);
            cal.phosphors.push_back(p);
        }
    }
    if (!cal.reference.empty() && !cal.phosphor(cal.reference))
        doc.fail(r.get("reference"), "reference", fmt::format("'{}' is not one of the [[phosphor]] ids", cal.reference));
    return cal;
}

LayerModelCalibration load_layer_calibration(const std::string& path) { return layer_calibration_from_toml(TomlDoc::from_file(path)); }

std::vector<std::string> apply_layer_calibration(const LayerModelCalibration& cal, LayerDesign& d) {
    std::vector<std::string> notes;
    d.mass_absorption_cm2_per_g *= cal.mass_absorption_scale;
    d.scattering_scale *= cal.scattering_scale;
    for (auto& c : d.components) {
        if (const LayerCalibratedPhosphor* p = cal.phosphor(c.phosphor.id)) c.brightness_factor *= p->brightness_factor;
        else if (!cal.phosphors.empty())
            notes.push_back(fmt::format("component '{}': phosphor {} was in none of the trials of calibration {}: its brightness is the "
                                        "uncalibrated data (factor 1{})",
                                        c.label, c.phosphor.id, cal.path, cal.reference.empty() ? "" : ", as the reference " + cal.reference));
    }
    d.calibration = cal.path;
    return notes;
}

LayerCalibrationProblem::LayerCalibrationProblem(const std::vector<LayerCalibrationTrial>& trials, const LayerCalibrationOptions& o) {
    if (trials.empty()) throw Error("calibration needs at least one trial module");
    kappa_index_ = 0;
    parameters_.push_back({CalibrationParameterKind::mass_absorption_scale, "kappa", kScaleLower, kScaleUpper, 1.0});
    scattering_index_ = 1;
    parameters_.push_back({CalibrationParameterKind::scattering_scale, "mu_s", kScaleLower, kScaleUpper, 1.0});
    bool all_absolute = true;
    std::vector<std::string> ids;
    std::map<std::string, int> trial_count;
    std::map<std::string, double> highest_qe;
    for (const auto& t : trials) {
        all_absolute = all_absolute && t.absolute;
        if (t.design.components.empty()) throw Error(fmt::format("trial '{}': design {} has no components", t.label, t.design_path));
        std::vector<std::string> here;
        for (std::size_t i = 0; i < t.design.components.size(); ++i) {
            const std::string& id = t.design.components[i].phosphor.id;
            double qe = 0;
            try {
                qe = qe_at_room(t.design, i);
            } catch (const Error& e) {
                throw Error(fmt::format("trial '{}': {}", t.label, e.what()));
            }
            highest_qe[id] = std::max(highest_qe[id], qe);
            if (std::find(here.begin(), here.end(), id) != here.end()) continue;
            here.push_back(id);
            if (std::find(ids.begin(), ids.end(), id) == ids.end()) ids.push_back(id);
            ++trial_count[id];
        }
    }
    if (o.brightness) {
        if (!all_absolute) {
            for (const auto& id : ids)
                if (reference_.empty() || trial_count[id] > trial_count[reference_]) reference_ = id;
            reference_reason_ = fmt::format("in {} of {} trials, the most used; its brightness factor is 1 by definition, since relative spectra "
                                            "cannot tell a common factor on every QE from the absorbed share",
                                            trial_count[reference_], trials.size());
        }
        for (const auto& id : ids) {
            if (id == reference_) continue;
            const double upper = std::max(1.001, 1.0 / std::max(highest_qe[id], 1e-3));
            parameters_.push_back({CalibrationParameterKind::brightness_factor, id, kBrightnessLower, upper, std::min(1.0, 0.999 * upper)});
        }
    } else {
        notes_.push_back("brightness factors not fitted: every phosphor keeps its data's quantum efficiency");
    }
    for (const auto& t : trials) {
        Trial tr;
        tr.design = t.design;
        if (!t.absolute) {
            tr.scale_index = static_cast<int>(parameters_.size());
            parameters_.push_back({CalibrationParameterKind::scale, t.label, kSpectrumScaleLower, kSpectrumScaleUpper, 1.0});
        }
        const CalibrationGrid g = measurement_grid(t.measured, t.label);
        if (g.nm.front() > 380 || g.nm.back() < 780)
            throw Error(fmt::format("trial '{}': the module spectrum covers {}-{} nm; calibration needs at least 380-780 nm", t.label, g.nm.front(), g.nm.back()));
        tr.bandwidth = o.fit.bandwidth_nm > 0 ? o.fit.bandwidth_nm : g.step;
        double norm = 0;
        for (std::size_t i = 0; i < g.nm.size(); ++i) {
            if (g.nm[i] < kFirstNm || g.nm[i] > kLastNm) continue;
            tr.grid_nm.push_back(g.nm[i]);
            tr.measured.push_back(t.measured.values[i]);
            norm += t.measured.values[i] * t.measured.values[i];
        }
        if (!(norm > 0)) throw Error(fmt::format("trial '{}': the spectrum has no power within {}-{} nm", t.label, kFirstNm, kLastNm));
        tr.norm = std::sqrt(norm);
        for (double& v : tr.measured) v /= tr.norm;
        tr.first_row = residual_count_;
        residual_count_ += tr.grid_nm.size();
        if (!t.design.calibration_notes.empty() || !t.design.calibration.empty())
            notes_.push_back(fmt::format("trial '{}': the design's own calibration is not applied (the uncalibrated model is fitted)", t.label));
        trials_.push_back(std::move(tr));
    }
}

LayerDesign LayerCalibrationProblem::design(std::size_t t, const std::vector<double>& p) const {
    LayerDesign d = trials_.at(t).design;
    d.mass_absorption_cm2_per_g *= p[static_cast<std::size_t>(kappa_index_)];
    d.scattering_scale *= p[static_cast<std::size_t>(scattering_index_)];
    for (std::size_t j = 0; j < parameters_.size(); ++j) {
        if (parameters_[j].kind != CalibrationParameterKind::brightness_factor) continue;
        for (auto& c : d.components)
            if (c.phosphor.id == parameters_[j].name) c.brightness_factor *= p[j];
    }
    return d;
}

Spectrum LayerCalibrationProblem::model_spectrum(std::size_t t, const std::vector<double>& p) const {
    const LayerDesign d = design(t, p);
    return evaluate_layer(d, d.temperature_C).spectrum;
}

std::vector<double> LayerCalibrationProblem::residuals(const std::vector<double>& p) const {
    if (p.size() != parameters_.size()) throw Error("calibration: one value per parameter");
    std::vector<double> r(residual_count_);
    for (std::size_t t = 0; t < trials_.size(); ++t) {
        const Trial& tr = trials_[t];
        const std::vector<double> m = values_at(triangular_bandpass(model_spectrum(t, p), tr.bandwidth), tr.grid_nm);
        double k = 1.0 / tr.norm;  // absolute: the model in the measurement's units, divided by its norm
        if (tr.scale_index >= 0) {
            double norm = 0;
            for (double v : m) norm += v * v;
            if (!(norm > 0)) throw Error("the layer model gives no light on the measured grid");
            k = p[static_cast<std::size_t>(tr.scale_index)] / std::sqrt(norm);
        }
        for (std::size_t i = 0; i < m.size(); ++i) r[tr.first_row + i] = k * m[i] - tr.measured[i];
    }
    return r;
}

std::vector<double> LayerCalibrationProblem::trial_residuals(const std::vector<double>& p) const {
    std::vector<std::size_t> sizes;
    for (const auto& tr : trials_) sizes.push_back(tr.grid_nm.size());
    return block_norms(residuals(p), sizes);
}

LayerModelCalibration LayerCalibrationProblem::calibration(const std::vector<double>& p, const std::vector<double>& sd) const {
    LayerModelCalibration c;
    c.mass_absorption_scale = p[static_cast<std::size_t>(kappa_index_)];
    c.mass_absorption_scale_sd = sd[static_cast<std::size_t>(kappa_index_)];
    c.scattering_scale = p[static_cast<std::size_t>(scattering_index_)];
    c.scattering_scale_sd = sd[static_cast<std::size_t>(scattering_index_)];
    c.reference = reference_;
    if (!reference_.empty()) c.phosphors.push_back({reference_, 1.0, 0.0});
    for (std::size_t j = 0; j < parameters_.size(); ++j)
        if (parameters_[j].kind == CalibrationParameterKind::brightness_factor) c.phosphors.push_back({parameters_[j].name, p[j], sd[j]});
    return c;
}

LayerCalibrationResult calibrate_layer_model(const std::vector<LayerCalibrationTrial>& trials, const LayerCalibrationOptions& o) {
    const LayerCalibrationProblem problem(trials, o);
    LayerCalibrationResult res;
    try {
        res.fit = fit_least_squares(problem, o.fit);
    } catch (const Error& e) {
        throw Error(fmt::format("layer calibration: {}", e.what()));
    }
    res.reference = problem.reference();
    res.reference_reason = problem.reference_reason();
    res.warnings = problem.notes();
    res.warnings.insert(res.warnings.end(), res.fit.warnings.begin(), res.fit.warnings.end());
    res.calibration = problem.calibration(res.fit.values, res.fit.sd);
    const std::vector<double> per_trial = problem.trial_residuals(res.fit.values);
    for (std::size_t t = 0; t < trials.size(); ++t) {
        std::size_t points = 0;
        for (double w : trials[t].measured.wavelengths_nm) points += (w >= kFirstNm && w <= kLastNm) ? 1 : 0;
        res.trials.push_back({trials[t].label, trials[t].design_path, trials[t].spectrum_path, per_trial[t], points});
        res.absolute.push_back(trials[t].absolute);
    }
    return res;
}

}  // namespace lampwright
