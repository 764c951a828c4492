#pragma once
// Presenting spectral unmixing (lampwright unmix): text, CSV, JSON, the reconstructed spectra as
// CSV and the SVG plot of measured vs reconstructed with the component stack.
#include "lampwright/phosphor/spectral_unmixing.hpp"

#include <nlohmann/json.hpp>

#include <cstddef>
#include <string>
#include <vector>

namespace lampwright {

// Version of the unmix JSON document (docs/output-schemas.md, "unmix"); raised when a field
// changes meaning or type, never for an added field.
inline constexpr int kUnmixSchemaVersion = 1;

// The run's settings, stated beside the results.
struct UnmixSettings {
    std::string excitation;       // Excitation::describe()
    std::string components_from;  // "--components", "the recipe <path>" or "chosen"
    int max_components = 4;
    double max_shift_nm = 0;
    double max_width_change = 0;  // relative (0.1 = 10 %)
};

// How the mass-fraction sd is obtained, in words (text and JSON).
extern const char* const kUnmixUncertaintyMethod;

// Warnings of one result: the model's notes and the assessments' warnings (measured and fitted).
std::vector<std::string> unmix_warnings(const BlendUnmixing& u);

// CSV: fixed columns, then `groups` component groups (c<i>_id, c<i>_mass_fraction,
// c<i>_photon_share, c<i>_mass_fraction_sd, c<i>_radiant_share, c<i>_emitted_photon_share,
// c<i>_shift_nm); a result with fewer components has empty cells in the remaining groups.
std::vector<std::string> unmix_columns(std::size_t groups);
std::vector<std::string> unmix_values(const BlendUnmixing& u, std::size_t groups);

nlohmann::ordered_json unmix_result_json(const BlendUnmixing& u);
// {"schema_version", "command", "settings", "method", "spectra": [...]}
nlohmann::ordered_json unmix_json(const std::vector<BlendUnmixing>& results, const UnmixSettings& settings);

std::string unmix_text(const BlendUnmixing& u);
// The lines on the method, once after all results.
std::string unmix_method_text(const UnmixSettings& settings);

// "wavelength_nm,<name>,..." with every reconstruction (after the bandpass) at its measured
// wavelengths; the wavelengths are those of all spectra together, a cell is empty where a
// spectrum has no point.
std::string unmix_spectra_csv(const std::vector<BlendUnmixing>& results);

// One panel per spectrum: measured points, the reconstruction, and the stacked parts (discharge
// light at the bottom, then each component), all as the instrument records them.
std::string unmix_svg(const std::vector<BlendUnmixing>& results);

}  // namespace lampwright
