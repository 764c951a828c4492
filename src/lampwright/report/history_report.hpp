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
// `note` (e.g. spec_selection_text) is added to each chart's title.
std::string control_charts_svg(const std::vector<ControlChart>& charts, const std::string& note = "");

// Which spec's lots are shown: "showing spec 'X' (3 of 5 lots); other specs: 'Y', 'Z'" when the
// database holds more than one spec, else empty. JSON: {spec, lots, total_lots, other_specs}.
std::string spec_selection_text(const SpecSelection& s);
nlohmann::ordered_json spec_selection_json(const SpecSelection& s);
nlohmann::ordered_json control_charts_json(const std::vector<ControlChart>& charts);

}  // namespace lampwright
