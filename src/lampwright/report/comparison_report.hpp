#pragma once
// Presenting a side-by-side comparison of LED layer designs, blend recipes and measured spectra:
// a table a person reads, CSV (columns name, kind, x, y, cct_K, duv, Ra, R9, ler_lm_per_W,
// efficiency, pump_leak_fraction, efficacy_lm_per_W) and an SVG of the spectra and u'v' points.
#include "lampwright/colour/assessment.hpp"
#include "lampwright/core/spectrum.hpp"

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
};

std::string comparison_text(const std::vector<ComparisonEntry>& entries);
std::string comparison_csv(const std::vector<ComparisonEntry>& entries);
std::string comparison_svg(const std::vector<ComparisonEntry>& entries);

}  // namespace lampwright
