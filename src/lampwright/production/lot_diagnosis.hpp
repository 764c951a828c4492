#pragma once
// Which phosphor of a lot moved, and what a correction will do to the whole lot (README "Drift
// diagnosis"):
//   - drift: every lamp and the lot's centroid spectrum are unmixed against the recipe's
//     components (phosphor/spectral_unmixing.hpp, unmix_blend: NNLS, model-inverse mass
//     fractions); per component the lot's apparent mass fraction is set beside the recipe's, with
//     the standard error of the per-lamp fractions as its uncertainty;
//   - correction: the recipe corrected from the centroid of the lamps that are not robust outliers
//     (production/lot_correction.hpp), its uncertainty by a bootstrap over those lamps (Efron and
//     Tibshirani 1993, An Introduction to the Bootstrap, ch. 6: the bootstrap estimate of a
//     standard error), and each measured lamp shifted by the model's change of spectrum and judged
//     against the spec, so that every limit (not only the colour) is predicted.
#include "lampwright/core/spectrum.hpp"
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/production/lot_correction.hpp"
#include "lampwright/production/qc.hpp"

#include <cstddef>
#include <limits>
#include <string>
#include <vector>

namespace lampwright {

// A move counts as real when it exceeds this many standard errors (about the two-sided 95 %
// level of a normal estimate; common practice, no source).
inline constexpr double kDriftSignificance = 2.0;

struct DriftComponent {
    std::string label;
    std::string short_label;        // the phosphor's abbreviation where it has one (chart ticks), else the label
    double recipe_fraction = 0;     // the recipe's mass fraction, normalised
    double lot_fraction = 0;        // the model inverse of the lot's centroid spectrum
    double lot_fraction_sd = std::numeric_limits<double>::quiet_NaN();  // the unmix's own sd of it (residual and Jacobian)
    double lamp_mean = 0, lamp_sd = 0;  // the per-lamp fractions of the lamps used
    double standard_error = std::numeric_limits<double>::quiet_NaN();   // lamp_sd / sqrt(n); NaN for n < 2
    double uncertainty = std::numeric_limits<double>::quiet_NaN();      // the one the flag uses (see DriftDiagnosis)
    double change = 0;              // lot_fraction - recipe_fraction
    double z = std::numeric_limits<double>::quiet_NaN();                // change / uncertainty
    bool moved = false;             // |change| > kDriftSignificance x uncertainty
};

struct LampUnmix {
    std::string name;
    bool used = false;              // in the centroid and the spread (not an outlier, unmixed)
    bool outlier = false;
    double residual = std::numeric_limits<double>::quiet_NaN();  // relative L2 over 380-780 nm
    std::vector<double> fractions;  // per component; empty when the unmix failed
    std::string error;              // why it could not be unmixed
};

struct DriftDiagnosis {
    std::vector<DriftComponent> components;
    std::vector<LampUnmix> lamps;
    std::size_t lamps_used = 0;
    double centroid_residual = 0;          // of the centroid spectrum's unmix
    double centroid_line_fraction = 0;     // its discharge-line fraction
    int bandwidth_nm = 0;                  // bandpass of the unmix
    // The moved component with the largest |change| (-1: none moved beyond its uncertainty). A
    // brightness or absorption drift of one phosphor by a factor f changes its apparent fraction by
    // w (f - 1)(1 - w) / D and every other one's by -w_j (f - 1) w / D (D = 1 + (f - 1) w, the
    // renormalisation), and 1 - w >= w_j, so the drifted one has the largest absolute change.
    int most_moved = -1;
    // "standard error over n lamps" or, with fewer than 2 lamps, "the unmix's sd".
    std::string uncertainty_basis;
    std::vector<std::string> notes;
};

// Unmixes each lamp and the mean of the used lamps' spectra (each scaled to unit sum over its
// 380-780 nm points first, so that a brighter lamp weighs no more) against `recipe`'s components.
// `use[i]` false leaves lamp i out of the centroid and the spread (it is still unmixed and listed);
// an empty `use` uses every lamp. The spectra must share one wavelength grid (Error otherwise).
// The uncertainty of a component is the standard error of the per-lamp fractions (n >= 2 lamps),
// else the unmix's own sd of the centroid.
DriftDiagnosis diagnose_drift(const BlendInput& recipe, const std::vector<SampledSpectrum>& lamps, const std::vector<std::string>& names,
                              const std::vector<bool>& use = {}, int bandwidth_nm = 0);

// The predicted share of the corrected lot that passes every limit of the spec is warned about
// below this (our rule: a correction that one lamp in ten would fail should be tried on a trial
// batch with changed limits in mind; common practice, no source).
inline constexpr double kPassShareWarning = 0.90;

struct CorrectedLotPrediction {
    std::size_t lamps = 0, passing = 0;
    double pass_share = 0;
    double mean_ra = 0, mean_r9 = 0;       // of the shifted lamps (NaN where none has Ra)
    Chromaticity centroid;                 // mean x, y of the shifted lamps
    double centroid_steps = 0;
    Chromaticity inlier_centroid;          // the same over the lamps marked inliers (all when none is marked)
    double inlier_centroid_steps = 0;
    // Failed limits of the shifted lamps, by kind ("chromaticity", "Ra", "R9", "CCT", "Duv", ...)
    // with the number of lamps failing each.
    std::vector<std::pair<std::string, std::size_t>> failures;
    bool warning = false;                  // pass_share < kPassShareWarning
    std::string warning_text;
};

struct InlierCorrection {
    LotCorrection correction;              // from the inlier centroid
    std::size_t inliers = 0, outliers = 0;
    Chromaticity all_centroid, inlier_centroid;
    double outlier_shift_steps = 0;        // all-lamps centroid from the inlier centroid, MacAdam steps at the target
    // Bootstrap over the inlier lamps (resampled with replacement, `resamples` times, a seeded
    // std::mt19937_64): sd of each corrected fraction, and of where the corrected lot lands
    // (the resampled centroid plus the correction's model shift) in x and y.
    int resamples = 0;
    unsigned long long seed = 0;
    std::vector<double> fraction_sd;
    double landing_x_sd = 0, landing_y_sd = 0;
    int failed_resamples = 0;              // resamples whose correction could not be computed
    CorrectedLotPrediction prediction;
};

// Every limit of the spec on each measured lamp shifted by the correction: the lamp's 1 nm
// spectrum + k (blend(corrected) - blend(original)), k = the lamp's 380-780 nm power over the
// original blend's, so the model's change of spectrum is added at the lamp's own scale.
// `inlier[i]` false marks lamp i an outlier for inlier_centroid (empty: every lamp is an inlier).
CorrectedLotPrediction predict_corrected_lot(const QcSpec& spec, const BlendInput& original, const BlendInput& corrected,
                                             const std::vector<SampledSpectrum>& lamps, const std::vector<bool>& inlier = {});

// The correction from the inlier centroid (lamps[i].outlier false; all lamps when none is
// flagged), with its bootstrap and the prediction of the corrected lot from every lamp's
// `spectrum` (outliers included: the slips that made them will recur). Error when a lamp has no
// spectrum kept (run_qc keep_spectra).
// The resamples are shared among `threads` workers (0: all cores, as run_qc); the result does not
// depend on their number.
InlierCorrection correct_from_inliers(const QcSpec& spec, const BlendInput& recipe, const std::vector<LampResult>& lamps,
                                      int resamples = 200, unsigned long long seed = 12, unsigned threads = 0);

}  // namespace lampwright
