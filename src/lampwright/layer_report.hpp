#pragma once
// Presenting LED layer results: text, CSV, JSON.
#include "lampwright/layer.hpp"

#include <nlohmann/json.hpp>

#include <string>
#include <vector>

namespace lampwright {

struct LayerReport {
    LayerDesign design;
    LayerResult room;       // at 25 degC
    LayerResult operating;  // at the design's operating temperature
    double shift_steps = 0; // chromaticity shift room -> operating, MacAdam steps
};
LayerReport layer_report(const LayerDesign& d, const AssessOptions& options = {});

// CSV: the assess columns (at the operating temperature) then the layer columns.
std::vector<std::string> layer_columns();
std::vector<std::string> layer_values(const LayerReport& r);
nlohmann::ordered_json layer_json(const LayerReport& r);
std::string layer_text(const LayerReport& r);
// The photobiological caution, or "" when the leak is negligible or the pump is not UV/violet.
std::string layer_caution(const LayerReport& r);

}  // namespace lampwright
