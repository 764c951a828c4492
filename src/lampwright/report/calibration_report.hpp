#pragma once
// Presenting a model calibration (design/calibration.hpp): text, JSON, and the calibration file
// (TOML, read back by phosphor/calibration_file.hpp).
#include "lampwright/design/calibration.hpp"
#include "lampwright/led/layer_calibration.hpp"
#include "lampwright/report/provenance.hpp"

#include <nlohmann/json.hpp>

#include <string>

namespace lampwright {

std::string calibration_text(const CalibrationResult& r);
nlohmann::ordered_json calibration_json(const CalibrationResult& r);
// The calibration file: a comment header with the provenance (time, command, trials and their
// residuals), then the factors and line fractions with their standard deviations.
std::string calibration_toml(const CalibrationResult& r, const RunProvenance& provenance);

// The same three for a layer calibration on measured LED modules (led/layer_calibration.hpp); the
// file is read back by load_layer_calibration.
std::string layer_calibration_text(const LayerCalibrationResult& r);
nlohmann::ordered_json layer_calibration_json(const LayerCalibrationResult& r);
std::string layer_calibration_toml(const LayerCalibrationResult& r, const RunProvenance& provenance);

}  // namespace lampwright
