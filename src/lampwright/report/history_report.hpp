#pragma once
// Presenting the lot history: the lot list and the control charts as a table a person reads,
// CSV cells, JSON and SVG.
#include "lampwright/production/lot_history.hpp"

#include <nlohmann/json.hpp>

#include <string>
#include <vector>

namespace lampwright {

std::string lots_text(const std::vector<LotRecord>& lots);
std::vector<std::string> lot_columns();
std::vector<std::string> lot_values(const LotRecord& l);  // CSV cells; empty where not defined
nlohmann::ordered_json lot_json(const LotRecord& l);

std::string control_charts_text(const std::vector<ControlChart>& charts);
// One standalone SVG document holding a chart per quantity (values, centre line, limits,
// out-of-control lots marked in red).
std::string control_charts_svg(const std::vector<ControlChart>& charts);
nlohmann::ordered_json control_charts_json(const std::vector<ControlChart>& charts);

}  // namespace lampwright
