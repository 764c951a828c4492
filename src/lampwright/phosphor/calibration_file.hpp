#pragma once
// A model calibration file (written by `lampwright calibrate`, named by a recipe's
// `calibration = "line2.toml"`): per phosphor an effective absorption factor, per lamp type the
// visible mercury-line fraction, fitted on trial lamps of one coating line. Format: README,
// "Calibrating the model on trial lamps", and docs/output-schemas.md.
//
//   format = "lampwright calibration 1"
//   excitation_nm = 253.7
//   reference = "Y2O3:Eu3+"
//   [[phosphor]]
//   id = "LaPO4:Ce3+,Tb3+"
//   absorption_factor = 0.81
//   absorption_factor_sd = 0.004
//   [[lamp_type]]
//   name = "tri-band"
//   mercury_lines = 0.036
//   mercury_lines_sd = 0.0008
#include "lampwright/io/toml_access.hpp"
#include "lampwright/phosphor/blend.hpp"

#include <optional>
#include <string>
#include <vector>

namespace lampwright {

inline constexpr const char* kCalibrationFormat = "lampwright calibration 1";

struct CalibratedPhosphor {
    std::string id;
    double absorption_factor = 1;  // multiplies the phosphor's absorption (and so its absorbed-share weight)
    double sd = 0;                 // standard deviation; 0 for the reference
};

struct CalibratedLampType {
    std::string name;              // "halophosphate", "tri-band", "broadband"
    double mercury_line_fraction = 0;
    double sd = 0;
};

struct ModelCalibration {
    std::string path;              // the file it was read from ("" when made in memory)
    std::string reference;         // the phosphor whose factor is 1 by definition
    std::vector<CalibratedPhosphor> phosphors;
    std::vector<CalibratedLampType> lamp_types;
    const CalibratedPhosphor* phosphor(const std::string& id) const;
    const CalibratedLampType* lamp_type(const std::string& name) const;
};

// Helpers of the calibration file readers (this one and the layer calibration's): the array of
// tables `key` ([[key]]), each checked to be a table; an optional standard deviation (>= 0; 0 when absent).
std::vector<const toml::table*> calibration_tables(const TomlDoc& doc, const toml::table& root, const std::string& key);
double calibration_sd(const TomlDoc& doc, const toml::table& t, const std::string& key, const std::string& where);

// Reads a calibration file; errors (InputError) name the file, the line and the key.
ModelCalibration load_calibration(const std::string& path);
ModelCalibration calibration_from_toml(const TomlDoc& doc);

// Applies a calibration to a mercury-discharge blend: each component's absorption becomes its
// absorption at the excitation x the factor of its phosphor, unless `absorption_set[i]` (the
// recipe gave one: it wins); the mercury-line fraction becomes the one of the blend's lamp type,
// unless the recipe set it. Sets blend.calibration. Returns notes on what was not applied.
std::vector<std::string> apply_calibration(const ModelCalibration& cal, BlendInput& blend, const std::vector<bool>& absorption_set);

}  // namespace lampwright
