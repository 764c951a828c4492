#pragma once
// Presenting a side-by-side comparison of LED layer designs, blend recipes and measured spectra:
// a table a person reads, CSV and JSON (docs/output-schemas.md, "compare") and an SVG of the
// spectra and u'v' points.
#include "lampwright/colour/assessment.hpp"
#include "lampwright/core/spectrum.hpp"

#include <nlohmann/json.hpp>

#include <cmath>
#include <string>
#include <vector>

namespace lampwright {

struct ComparisonEntry {
    std::string name, kind;
    Spectrum spectrum;
    Assessment assessment;
    double efficiency = NAN;   // converted (layer: leaked pump not counted) or radiant (blend) efficiency
    double leak_fraction = NAN;
    double efficacy = NAN;     // lm per W pump (layer) or per W absorbed (blend)
    std::string caution;
    // LED layers only (NaN otherwise): the design's pump peak (nm, at 25 degC), layer thickness,
    // operating temperature and the colour shift from 25 degC to it (MacAdam steps).
    double pump_peak_nm = NAN, thickness_um = NAN, operating_temperature_C = NAN, shift_steps = NAN;
};

std::string comparison_text(const std::vector<ComparisonEntry>& entries);
std::string comparison_csv(const std::vector<ComparisonEntry>& entries);
nlohmann::ordered_json comparison_json(const std::vector<ComparisonEntry>& entries);
std::string comparison_svg(const std::vector<ComparisonEntry>& entries);

}  // namespace lampwright
