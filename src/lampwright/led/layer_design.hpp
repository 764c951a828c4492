#pragma once
// LED layer design files (TOML):
//
//   name = "395 nm module, 60 um layer"
//   [pump]       peak_nm = 395   fwhm_nm = 12   power_W = 1.0     # or spectrum = "pump.csv"
//   [layer]      thickness_um = 60
//                binder_density_g_per_cm3 = 1.1                   # optional (silicone)
//                mass_absorption_cm2_per_g = 1000                  # optional: kappa for relative absorption 1
//                binder_index = 1.41   outside_index = 1.0              # optional: silicone, air
//                scattering_asymmetry = 0.85   reflector_reflectance = 0.9 # optional: grains' g, package
//                scattering_scale = 1                              # optional: x the grains' scattering coefficient
//   calibration = "cal.toml"                                        # optional: a layer calibration (lampwright calibrate), relative to the design
//   [operating]  temperature_C = 85                                # optional
//   phosphor_folders = ["mine"]                                     # optional
//   [[component]]
//   phosphor = "BaMgAl10O17:Eu2+"      # or spectrum = "em.csv" + absorption_spectrum = "abs.csv" + quantum_efficiency
//   loading = 0.10                     # mass fraction of the phosphor in the layer
#include "lampwright/led/layer.hpp"
#include "lampwright/io/toml_access.hpp"

#include <string>

namespace lampwright {

// True when the document is a layer design (it has a [layer] table).
bool is_layer_design(const TomlDoc& doc);
// With apply_calibration false the design's `calibration` is read but not applied (noted in
// calibration_notes): calibrate fits the uncalibrated model.
LayerDesign layer_design_from_toml(const TomlDoc& doc, const std::vector<std::string>& extra_folders = {},
                                   const std::vector<std::string>& extra_root_keys = {}, bool apply_calibration = true);
LayerDesign load_layer_design(const std::string& path, const std::vector<std::string>& extra_folders = {});

// Writes a design back as TOML, loadable by load_layer_design.
std::string layer_design_to_toml(const LayerDesign& d);

}  // namespace lampwright
