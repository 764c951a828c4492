#pragma once
// Presenting blend results and the phosphor library: text, CSV, JSON.
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/phosphor/phosphor.hpp"

#include <nlohmann/json.hpp>

#include <string>
#include <vector>

namespace lampwright {

// CSV: the assess columns, then blend columns, then five columns per component.
std::vector<std::string> blend_columns(const BlendResult& r);
std::vector<std::string> blend_values(const BlendResult& r);
nlohmann::ordered_json blend_json(const BlendResult& r, const BlendInput& in);
// The whole document of `blend --format json`: blend_json with Rf and Rg at the end (also the
// "blend" object of lampwright serve's evaluations, so both have one schema).
nlohmann::ordered_json blend_document_json(const BlendResult& r, const BlendInput& in);
// The model's assumptions for a discharge lamp: the mercury lines applied (fraction, ratios,
// lamp type, source) and how the 254 nm shares were taken (grain area or mass x absorption).
// Empty for an LED pump. Used by blend and fit.
std::string blend_assumptions_text(const BlendResult& r, const BlendInput& in);
std::string blend_text(const BlendResult& r, const BlendInput& in);
// One row per coating weight of coating_weight_sweep (docs/output-schemas.md, "blend --coating-sweep").
std::string coating_sweep_csv(const std::vector<BlendResult>& sweep);

std::vector<std::string> phosphor_columns();
std::vector<std::string> phosphor_values(const Phosphor& p);
nlohmann::ordered_json phosphor_json(const Phosphor& p);
// The library as a JSON array of phosphor_json (phosphors --format json, lampwright serve).
nlohmann::ordered_json phosphors_json(const std::vector<Phosphor>& phosphors);
std::string phosphor_table_text(const std::vector<Phosphor>& phosphors);

}  // namespace lampwright
