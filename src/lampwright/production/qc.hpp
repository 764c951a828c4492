#pragma once
// Quality control of lamp lots from measured spectra: a specification (target and limits), each
// lamp judged against it, and lot statistics (means, standard deviations, the chromaticity
// centroid, process performance Ppk with its confidence interval, robust outliers).
#include "lampwright/colour/assessment.hpp"
#include "lampwright/design/targets.hpp"
#include "lampwright/io/spectrum_io.hpp"

#include <array>
#include <functional>
#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace lampwright {

struct QcSpec {
    std::string path, name;
    // Chromaticity tolerance region.
    enum class Region { ellipse, ansi_quadrangle, circle } region = Region::ellipse;
    std::string target_description;
    Chromaticity centre;
    MacAdamEllipse step_ellipse;  // one-step ellipse at the centre: steps are always reported with it
    double max_steps = 4;         // ellipse region: n-step limit
    std::optional<AnsiC78377Class> ansi_class;  // quadrangle region
    double max_duv_prime = 0;     // circle region: radius in u'v'
    std::optional<double> ra_min, r9_min, cct_min_K, cct_max_K, duv_min, duv_max;
    // Absolute photometry limits (lamps measured in W/nm): luminous flux and luminous efficacy of
    // the source. A relative spectrum cannot meet them: it fails with "relative spectrum: no flux".
    std::optional<double> flux_min_lm, flux_max_lm, efficacy_min_lm_per_W;
    // CIE 224:2017 Rf and ANSI/IES TM-30-20 Rg limits (keys min_rf, min_rg, max_rg, as issue 13
    // names them). A lamp without a CCT has neither and fails them.
    std::optional<double> rf_min, rg_min, rg_max;
    // Per hue bin j = 1..16 (TM-30-20 bins of 22.5 degrees, index j - 1): a floor on Rf,hj (key
    // min_rf_hj) and a range on the local chroma shift Rcs,hj in per cent (keys min_rcs_hj,
    // max_rcs_hj), named like min_rf / min_rg / max_rg. A bin without samples fails its limits.
    std::array<std::optional<double>, kTm30HueBins> rf_h_min{}, rcs_h_min_percent{}, rcs_h_max_percent{};
    // The TM-30-20 Annex E level named by [limits] tm30_level ("P1", ...; empty = none): its
    // criteria fill the Rf, Rg, Rf,h1 and Rcs,h1 limits the file leaves unset.
    std::string tm30_level;
    std::vector<std::string> notes;  // for people: e.g. that the level's criteria are from memory
};

// Spec files (TOML):
//   name = "F4100 tri-band, 4-step"
//   [target]  flamp = "F4100"  steps = 4        # ANSI C78.376 centre, n-step ellipse
//          or ansi_class = 4000                 # ANSI C78.377 quadrangle
//          or x = 0.38  y = 0.377  steps = 4     # explicit centre, n-step ellipse
//          or x = 0.38  y = 0.377  duv_prime_max = 0.004   # explicit centre, u'v' circle
//   [limits]  ra_min = 80  r9_min = 0  cct_min_K = 3800  cct_max_K = 4300  duv_min = -0.006  duv_max = 0.006
//             flux_min_lm = 1200  flux_max_lm = 1400  efficacy_min_lm_per_W = 90   # absolute spectra only
//             min_rf = 80  min_rg = 95  max_rg = 110                               # CIE 224 / TM-30-20
//             min_rf_h1 = 75  min_rcs_h1 = -5  max_rcs_h1 = 15  (... _h16)         # TM-30-20 hue bins
//             tm30_level = "P1"   # TM-30-20 Annex E preset (P1-P3, F1-F3; from memory); keys given override it
QcSpec load_qc_spec(const std::string& path);

struct LampResult {
    std::string file;     // where it was read
    std::string name;     // spectrum name (file stem or column header)
    std::string content_hash;  // of the file's bytes (hex), for de-duplication
    Assessment assessment;
    double steps = 0;     // MacAdam steps from the target centre
    bool inside_region = false;
    std::vector<std::string> failures;  // limits not met, e.g. "Ra 78.2 < 80"
    bool pass() const { return failures.empty(); }
    bool outlier = false;
    std::string outlier_note;
    // The spectrum as read (its own grid), kept only when run_qc is asked to (the drift diagnosis
    // and the corrected-lot prediction need it); empty otherwise.
    SampledSpectrum spectrum;
};

struct BadFile {
    std::string file, reason;
};

// Process performance of one quantity against its spec limit(s). Ppk, not Cpk: the standard
// deviation is the overall one of the lot, not a within-subgroup estimate (Montgomery,
// Introduction to Statistical Quality Control, process capability chapter).
struct CapabilityEstimate {
    std::size_t n = 0;
    double mean = 0, sd = 0;
    double ppk = 0;                       // NaN when sd is 0 or fewer than 2 lamps
    double ppk_ci_low = 0, ppk_ci_high = 0;  // approximate 95 % interval (Bissell 1990); NaN as ppk
};
struct Capability {
    std::string quantity;
    std::optional<double> lower, upper;
    CapabilityEstimate all;               // every lamp with a value
    CapabilityEstimate without_outliers;  // the lamps not flagged as outliers (== all when none is)
};

struct LotStatistics {
    std::size_t count = 0, passed = 0;
    double pass_rate = 0;
    struct Summary {
        std::string quantity;
        double mean = 0, sd = 0, min = 0, max = 0;
    };
    std::vector<Summary> summaries;  // x, y, cct_K, duv, Ra, R9, steps, flux_lm, efficacy_lm_per_W, Rf, Rg (NaN: no lamp has one)
    Chromaticity centroid;
    double centroid_steps = 0;
    // x, y, CCT, Duv, Ra, R9, flux, efficacy, Rf, Rg where the spec limits them. Not MacAdam steps: a distance from the
    // centre is not normally distributed, so a normal-theory index on it means little; the
    // fraction outside the region says what the index would have tried to.
    std::vector<Capability> capabilities;
    double fraction_outside_region = 0;  // lamps outside the chromaticity region / lamps; NaN for none
    std::size_t outliers = 0;
    bool outliers_checked = false;       // false: the lot is below kMinLotForOutliers
};

struct QcRun {
    QcSpec spec;
    std::vector<LampResult> lamps;
    std::vector<BadFile> bad_files;
    LotStatistics stats;
    // The lot's centroid spectrum, assessed (for the report's colour vector graphic): the mean of
    // the lamps' 1 nm spectra, each scaled to unit sum over 380-780 nm, on the wavelengths every
    // lamp covers. None without lamps, or when the lamps share no wavelengths.
    std::optional<Assessment> centroid;
};

using ProgressCallback = std::function<void(std::size_t done, std::size_t total)>;

// Spectrum files under the inputs: files as given, folders' *.csv, *.txt, *.tsv, *.xml (sorted).
// Named in `bad` and left out: missing inputs, dangling links and link loops, FIFOs, sockets and
// devices, and a second name (a symbolic link) of a file already listed.
std::vector<std::string> collect_spectrum_files(const std::vector<std::string>& inputs, std::vector<BadFile>& bad);

// Judges one lamp (its assessment) against the spec.
LampResult judge_lamp(const QcSpec& spec, Assessment a);

// The number of worker threads run_qc uses: `requested` (0 = all cores), at most the number of
// cores and of files, at least 1.
unsigned qc_worker_count(unsigned requested, std::size_t files);

// Reads and judges every file, in parallel over `threads` workers (0 = all cores; capped by
// qc_worker_count).
// `read` carries --units and --power-W for files that declare no unit or power.
// `keep_spectra` keeps each lamp's spectrum in LampResult::spectrum.
QcRun run_qc(const QcSpec& spec, const std::vector<std::string>& inputs, unsigned threads = 0, const ProgressCallback& progress = {},
             const SpectrumReadOptions& read = {}, bool keep_spectra = false);

// Robust outliers: no flags in a lot of fewer lamps, where median and MAD are too unsteady to
// call anything an outlier (common practice, no source).
inline constexpr std::size_t kMinLotForOutliers = 8;
// Lower bound on the robust scale of each quantity, about the resolution of a lamp measurement
// (common practice, no source): lamps that agree to within the instrument's repeatability give
// a MAD near zero, and any small difference would otherwise have a huge z.
double outlier_scale_floor(const std::string& quantity);

// Lot statistics of judged lamps; also marks robust outliers on the lamps: z = (v - median) /
// max(1.4826 MAD, floor) beyond 3.5 (the modified z-score of Iglewicz and Hoaglin 1993, with
// 1.4826 MAD the normal-consistent scale), only in lots of kMinLotForOutliers lamps or more.
LotStatistics lot_statistics(const QcSpec& spec, std::vector<LampResult>& lamps);

// Process performance: Ppk = min(USL - mean, mean - LSL) / (3 sd) with the overall sample sd,
// one-sided when one limit is given (Montgomery, Introduction to Statistical Quality Control).
double process_capability(double mean, double sd, std::optional<double> lower, std::optional<double> upper);
// Approximate 95 % confidence interval of Ppk from n values (Bissell 1990):
// Ppk -+ 1.96 sqrt(1 / (9 n) + Ppk^2 / (2 (n - 1))). NaN for n < 2 or a NaN Ppk.
std::pair<double, double> ppk_confidence_95(double ppk, std::size_t n);

// FNV-1a 64-bit hash of bytes, as 16 hex digits (content identity of spectrum files).
std::string content_hash(const std::string& bytes);

}  // namespace lampwright
