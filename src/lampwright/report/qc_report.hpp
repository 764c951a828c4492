#pragma once
// QC reports: the lot as text, CSV, JSON, and one self-contained HTML file (inline SVG, no
// network): u'v' diagram zoomed on the target (Planckian locus with CCT ticks, the tolerance
// region, each lamp coloured pass/fail, the centroid), histograms of Ra and R9, the TM-30-20 colour
// vector graphic of the lot's centroid spectrum (id "cvg-centroid") with histograms of Rf and Rg
// ("hist-rf", "hist-rg"), a table of every lamp (of the failing and outlying ones in a lot of
// more than kQcReportDensityAbove lamps), the lot statistics.
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/production/lot_correction.hpp"
#include "lampwright/production/lot_diagnosis.hpp"
#include "lampwright/production/qc.hpp"

#include <nlohmann/json.hpp>

#include <string>
#include <vector>

namespace lampwright {

std::string qc_text(const QcRun& run);
std::vector<std::string> qc_lamp_columns();          // assess columns + file, steps, inside, pass, failures, outlier
std::vector<std::string> qc_lamp_values(const LampResult& l);
nlohmann::ordered_json qc_json(const QcRun& run);
// Above this many lamps the HTML report draws the u'v' diagram as a density plot (lamps counted
// in square cells, a legend of counts) with only failing and outlying lamps as single points, and
// its lamp table lists only those lamps (the CSV and JSON outputs still hold every lamp): one
// point and one row per lamp made a 50,000-lamp report 27 MB (common practice, no source).
inline constexpr std::size_t kQcReportDensityAbove = 2000;
std::string qc_html_report(const QcRun& run, const std::string& extra_html = "");

// The boundary of the spec's tolerance region as CIE 1976 u'v' points (closed polygon).
std::vector<UV> tolerance_region_uv(const QcSpec& spec, int points = 180);

// The corrected recipe of a lot (from the inlier centroid): old and new fractions with their
// bootstrap sd, the expected centroid, the predicted corrected lot (Ra, R9, pass share and the
// warning) and the new recipe as TOML; as text and as the HTML section (id "correction").
std::string lot_correction_text(const InlierCorrection& c, const BlendInput& recipe, const std::string& recipe_path);
std::string lot_correction_html(const InlierCorrection& c, const BlendInput& recipe);
// The correction for qc --format json ("correction" object; docs/output-schemas.md) and the
// corrected recipe as a TOML file (qc --recipe-out), loadable by blend and fit.
nlohmann::ordered_json lot_correction_json(const InlierCorrection& c, const BlendInput& recipe, const std::string& recipe_path);
std::string lot_correction_toml(const LotCorrection& c);

}  // namespace lampwright
