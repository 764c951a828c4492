#include "lampwright/production/lot_diagnosis.hpp"

#include "lampwright/core/parallel.hpp"

#include "lampwright/colour/assessment.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/core/interpolation.hpp"
#include "lampwright/core/statistics.hpp"
#include "lampwright/phosphor/spectral_unmixing.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <random>
#include <thread>

namespace lampwright {

namespace {

// Sum of the values at the 380-780 nm points (CIE 15:2004 visible range): the scale each lamp is
// brought to before the centroid spectrum is formed.
double visible_sum(const SampledSpectrum& s) {
    double t = 0;
    for (std::size_t i = 0; i < s.values.size(); ++i)
        if (s.wavelengths_nm[i] >= 380 && s.wavelengths_nm[i] <= 780) t += s.values[i];
    return t;
}

// "Ra 79.0 < 80" -> "Ra", "chromaticity 5.71 steps > 4" -> "chromaticity".
std::string failure_kind(const std::string& f) {
    const auto space = f.find(' ');
    return space == std::string::npos ? f : f.substr(0, space);
}

}  // namespace

DriftDiagnosis diagnose_drift(const BlendInput& recipe, const std::vector<SampledSpectrum>& lamps, const std::vector<std::string>& names,
                              const std::vector<bool>& use, int bandwidth_nm) {
    if (recipe.components.empty()) throw Error("a drift diagnosis needs a recipe with components");
    BlendUnmixingOptions o;
    o.excitation = recipe.excitation;
    o.bandwidth_nm = bandwidth_nm;
    const std::size_t nc = recipe.components.size();
    DriftDiagnosis d;
    const std::vector<double> w0 = normalised_mass_fractions(recipe);

    const SampledSpectrum* grid = nullptr;
    for (std::size_t i = 0; i < lamps.size(); ++i) {
        LampUnmix u;
        u.name = i < names.size() ? names[i] : lamps[i].name;
        u.outlier = !use.empty() && i < use.size() && !use[i];
        try {
            const BlendUnmixing r = unmix_blend(lamps[i], recipe.components, o);
            u.residual = r.relative_residual;
            for (const auto& c : r.components) u.fractions.push_back(c.mass_fraction);
            u.used = !u.outlier;
            d.bandwidth_nm = r.bandwidth_nm;
        } catch (const Error& e) {
            u.error = e.what();
        }
        if (u.used) {
            if (!grid) {
                grid = &lamps[i];
            } else if (lamps[i].wavelengths_nm != grid->wavelengths_nm) {
                throw Error(fmt::format("lamps '{}' and '{}' lie on different wavelength grids: the lot's centroid spectrum needs one grid",
                                        grid->name, lamps[i].name));
            }
        }
        d.lamps.push_back(std::move(u));
    }
    if (!grid) throw Error("no lamp of the lot could be unmixed against the recipe's components");

    // The lot's centroid spectrum: the mean of the used lamps, each at unit 380-780 nm sum.
    SampledSpectrum centroid{"lot centroid", grid->wavelengths_nm, std::vector<double>(grid->values.size(), 0.0)};
    std::size_t used = 0;
    for (std::size_t i = 0; i < lamps.size(); ++i) {
        if (!d.lamps[i].used) continue;
        const double scale = visible_sum(lamps[i]);
        if (!(scale > 0)) continue;
        for (std::size_t k = 0; k < centroid.values.size(); ++k) centroid.values[k] += lamps[i].values[k] / scale;
        ++used;
    }
    if (used == 0) throw Error("no lamp of the lot has power within 380-780 nm");
    for (double& v : centroid.values) v /= static_cast<double>(used);
    d.lamps_used = used;
    const BlendUnmixing c = unmix_blend(centroid, recipe.components, o);
    d.centroid_residual = c.relative_residual;
    d.centroid_line_fraction = c.discharge_line_fraction;
    d.notes = c.notes;
    d.uncertainty_basis = used >= 2 ? fmt::format("standard error of the per-lamp fractions over {} lamps", used)
                                    : "the unmix's own sd (a single lamp: no spread)";

    double largest = -1;
    for (std::size_t j = 0; j < nc; ++j) {
        DriftComponent dc;
        dc.label = recipe.components[j].label;
        const std::string& abbreviation = recipe.components[j].phosphor.abbreviation;
        dc.short_label = abbreviation.empty() || dc.label != recipe.components[j].phosphor.id ? dc.label : abbreviation;
        dc.recipe_fraction = w0[j];
        dc.lot_fraction = c.components[j].mass_fraction;
        dc.lot_fraction_sd = c.components[j].mass_fraction_sd;
        std::vector<double> per_lamp;
        for (const auto& u : d.lamps)
            if (u.used) per_lamp.push_back(u.fractions[j]);
        dc.lamp_mean = mean(per_lamp);
        dc.lamp_sd = per_lamp.size() >= 2 ? sample_sd(per_lamp) : std::numeric_limits<double>::quiet_NaN();
        if (per_lamp.size() >= 2) dc.standard_error = dc.lamp_sd / std::sqrt(static_cast<double>(per_lamp.size()));
        dc.uncertainty = per_lamp.size() >= 2 ? dc.standard_error : dc.lot_fraction_sd;
        dc.change = dc.lot_fraction - dc.recipe_fraction;
        if (dc.uncertainty > 0) dc.z = dc.change / dc.uncertainty;
        dc.moved = std::isfinite(dc.z) && std::abs(dc.z) > kDriftSignificance;
        if (dc.moved && std::abs(dc.change) > largest) {
            largest = std::abs(dc.change);
            d.most_moved = static_cast<int>(j);
        }
        d.components.push_back(dc);
    }
    return d;
}

CorrectedLotPrediction predict_corrected_lot(const QcSpec& spec, const BlendInput& original, const BlendInput& corrected,
                                             const std::vector<SampledSpectrum>& lamps, const std::vector<bool>& inlier) {
    AssessOptions quick;
    quick.spectral_features = false;
    const BlendResult before = evaluate_blend(original, quick), after = evaluate_blend(corrected, quick);
    const double reference = visible_power(before.spectrum);
    if (!(reference > 0)) throw Error("the recipe's blend has no visible power");
    auto model_change = [&](int nm) {
        const double a = after.spectrum.covers(nm) ? after.spectrum.values[static_cast<std::size_t>(nm - after.spectrum.first_nm)] : 0.0;
        const double b = before.spectrum.covers(nm) ? before.spectrum.values[static_cast<std::size_t>(nm - before.spectrum.first_nm)] : 0.0;
        return a - b;
    };
    CorrectedLotPrediction p;
    std::vector<double> ra, r9, xs, ys, in_x, in_y;
    std::map<std::string, std::size_t> failed;
    for (std::size_t i = 0; i < lamps.size(); ++i) {
        const SampledSpectrum& s = lamps[i];
        Spectrum m = resample_to_1nm(s);
        const double k = visible_power(m) / reference;
        for (std::size_t j = 0; j < m.values.size(); ++j) m.values[j] += k * model_change(m.first_nm + static_cast<int>(j));
        const LampResult r = judge_lamp(spec, assess(m));
        ++p.lamps;
        if (r.pass()) ++p.passing;
        for (const auto& f : r.failures) ++failed[failure_kind(f)];
        if (r.assessment.rendering) {
            ra.push_back(r.assessment.rendering->ra);
            r9.push_back(r.assessment.rendering->ri[8]);
        }
        xs.push_back(r.assessment.xy.x);
        ys.push_back(r.assessment.xy.y);
        if (inlier.empty() || (i < inlier.size() && inlier[i])) in_x.push_back(r.assessment.xy.x), in_y.push_back(r.assessment.xy.y);
    }
    p.pass_share = p.lamps ? static_cast<double>(p.passing) / static_cast<double>(p.lamps) : 0.0;
    p.mean_ra = mean(ra);
    p.mean_r9 = mean(r9);
    p.centroid = {mean(xs), mean(ys)};
    MacAdamEllipse at_target = spec.step_ellipse;
    at_target.centre = spec.centre;
    p.centroid_steps = p.lamps ? macadam_steps(at_target, p.centroid) : std::numeric_limits<double>::quiet_NaN();
    p.inlier_centroid = {mean(in_x), mean(in_y)};
    p.inlier_centroid_steps = in_x.empty() ? std::numeric_limits<double>::quiet_NaN() : macadam_steps(at_target, p.inlier_centroid);
    for (const auto& [kind, n] : failed) p.failures.emplace_back(kind, n);
    std::stable_sort(p.failures.begin(), p.failures.end(), [](const auto& a, const auto& b) { return a.second > b.second; });
    p.warning = p.lamps > 0 && p.pass_share < kPassShareWarning;
    if (p.warning) {
        std::string most;
        for (std::size_t i = 0; i < p.failures.size(); ++i)
            most += fmt::format("{}{} ({} lamp{})", i ? ", " : "", p.failures[i].first, p.failures[i].second, p.failures[i].second == 1 ? "" : "s");
        p.warning_text = fmt::format("only {:.1f} % of the corrected lot is predicted to pass every limit of the spec (below {:.0f} %); failing: {}. "
                                     "Do not run the correction without a trial batch",
                                     100 * p.pass_share, 100 * kPassShareWarning, most);
    }
    return p;
}

InlierCorrection correct_from_inliers(const QcSpec& spec, const BlendInput& recipe, const std::vector<LampResult>& lamps, int resamples,
                                      unsigned long long seed, unsigned threads) {
    if (lamps.empty()) throw Error("no lamps: nothing to correct");
    std::vector<SampledSpectrum> spectra;
    for (const auto& l : lamps) {
        if (l.spectrum.values.empty()) throw Error(fmt::format("lamp '{}': its spectrum was not kept (run_qc keep_spectra)", l.name));
        spectra.push_back(l.spectrum);
    }
    InlierCorrection ic;
    std::vector<std::size_t> in;
    for (std::size_t i = 0; i < lamps.size(); ++i)
        if (!lamps[i].outlier) in.push_back(i);
    if (in.empty())
        for (std::size_t i = 0; i < lamps.size(); ++i) in.push_back(i);
    ic.inliers = in.size();
    ic.outliers = lamps.size() - in.size();
    auto centroid_of = [&](const std::vector<std::size_t>& idx) {
        double x = 0, y = 0;
        for (std::size_t i : idx) x += lamps[i].assessment.xy.x, y += lamps[i].assessment.xy.y;
        return Chromaticity{x / static_cast<double>(idx.size()), y / static_cast<double>(idx.size())};
    };
    std::vector<std::size_t> all(lamps.size());
    for (std::size_t i = 0; i < all.size(); ++i) all[i] = i;
    ic.inlier_centroid = centroid_of(in);
    ic.all_centroid = centroid_of(all);
    MacAdamEllipse around = spec.step_ellipse;
    around.centre = ic.inlier_centroid;
    ic.outlier_shift_steps = macadam_steps(around, ic.all_centroid);
    ic.correction = correct_recipe(recipe, ic.inlier_centroid, spec.centre, spec.step_ellipse);

    // Bootstrap (Efron and Tibshirani 1993, ch. 6): the inliers resampled with replacement; the
    // draws are made first, in order, from one seeded generator (rng() % n: the same on every
    // standard library, unlike uniform_int_distribution), so the result does not depend on threads.
    ic.resamples = std::max(0, resamples);
    ic.seed = seed;
    std::mt19937_64 rng(seed);
    std::vector<Chromaticity> centres(static_cast<std::size_t>(ic.resamples));
    for (auto& c : centres) {
        std::vector<std::size_t> pick(in.size());
        for (auto& k : pick) k = in[static_cast<std::size_t>(rng() % in.size())];
        c = centroid_of(pick);
    }
    const std::size_t nc = recipe.components.size();
    std::vector<std::vector<double>> fractions(centres.size());
    // Each resample on its own: a thread that cannot be started leaves its share to the others.
    parallel_for(centres.size(), qc_worker_count(threads, centres.size()), [&](std::size_t b) {
        try {
            fractions[b] = correct_recipe(recipe, centres[b], spec.centre, spec.step_ellipse).new_fractions;
        } catch (const std::exception&) {
            fractions[b].clear();
        }
    });
    std::vector<std::vector<double>> per_component(nc);
    for (const auto& f : fractions) {
        if (f.size() != nc) {
            ++ic.failed_resamples;
            continue;
        }
        for (std::size_t j = 0; j < nc; ++j) per_component[j].push_back(f[j]);
    }
    for (std::size_t j = 0; j < nc; ++j) ic.fraction_sd.push_back(sample_sd(per_component[j]));
    // Where the corrected lot lands if the lot's true centroid is the resampled one: that centroid
    // plus the correction's model shift, whose spread is the resampled centroids' spread.
    std::vector<double> xs, ys;
    for (const auto& c : centres) xs.push_back(c.x), ys.push_back(c.y);
    ic.landing_x_sd = sample_sd(xs);
    ic.landing_y_sd = sample_sd(ys);

    std::vector<bool> is_inlier(lamps.size(), false);
    for (std::size_t i : in) is_inlier[i] = true;
    ic.prediction = predict_corrected_lot(spec, recipe, ic.correction.corrected, spectra, is_inlier);
    return ic;
}

}  // namespace lampwright
