#pragma once
// Presenting LED layer results: text, CSV, JSON.
#include "lampwright/led/layer.hpp"

#include <nlohmann/json.hpp>

#include <string>
#include <vector>

namespace lampwright {

// CSV: the assess columns (at the operating temperature) then the layer columns.
std::vector<std::string> layer_columns();
std::vector<std::string> layer_values(const LayerEvaluation& r);
nlohmann::ordered_json layer_json(const LayerEvaluation& r);
// Added for issue 14 (pump drift, package), at the very end of the `layer` CSV row and JSON
// object (after Rf, Rg): junction temperature, the pump at it, top, chip loss, UV and blue shares.
std::vector<std::string> layer_package_columns();
std::vector<std::string> layer_package_values(const LayerEvaluation& r);
void add_layer_package_json(nlohmann::ordered_json& j, const LayerEvaluation& r);
// The whole document of `layer --format json`: layer_json with Rf and Rg, then the package fields (issue 14), at the end (also the
// "layer" object of lampwright serve's evaluations).
nlohmann::ordered_json layer_document_json(const LayerEvaluation& r);
std::string layer_text(const LayerEvaluation& r);
// The photobiological caution, or "" when the leak is negligible or the pump is not UV/violet.
std::string layer_caution(const LayerEvaluation& r);

}  // namespace lampwright
