#pragma once
// Phosphors: emission model, absorption, quantum efficiency, thermal data (data/phosphors and
// user folders; schema in data/phosphors/README.md). Emission spectra are models built from
// published peak positions and widths, or a user's measured spectrum.
#include "lampwright/core/spectrum.hpp"

#include <optional>
#include <string>
#include <vector>

namespace lampwright {

// Grid of every emission, excitation and blend spectrum: 300-900 nm at 1 nm.
inline constexpr int kEmissionFirstNm = 300;
inline constexpr int kEmissionLastNm = 900;

inline constexpr int kEmissionGridSize = kEmissionLastNm - kEmissionFirstNm + 1;

// An all-zero spectrum on the emission grid.
Spectrum emission_grid(const std::string& name);
// Photons per nm (summing to one) on the emission grid from a spectral power distribution:
// N(l) ~ P(l) l, since a photon carries h c / l (zero where the power is not given).
// Throws Error when there is no power on the grid.
Spectrum photons_from_power(const Spectrum& power);
// Mean of 1/l (1/nm) over a photon distribution summing to one: mean photon energy = h c <1/l>.
double mean_inverse_wavelength(const Spectrum& photons);
// Spectral power (summing to one) of a photon distribution: P(l) ~ N(l) / l.
Spectrum power_from_photons(const Spectrum& photons);

struct EmissionBand {
    double peak_nm = 0, fwhm_nm = 0, weight = 1;  // peak and FWHM of the power-per-nm curve
};
struct EmissionLine {
    double nm = 0, weight = 1;
    double fwhm_nm = 0;  // this line's width; 0: the phosphor's line_fwhm_nm
};

struct Phosphor {
    std::string id, abbreviation, name, body_colour, model_note;
    std::vector<std::string> use;  // "lamp", "led"
    // "halophosphate" for the calcium halophosphate family (its lamps have their own mercury-line
    // defaults, phosphor/mercury_discharge); empty otherwise.
    std::string lamp_family;
    std::string origin;            // file it was read from ("data/phosphors/..." for built-in ones)
    double density_g_per_cm3 = 0;
    std::string density_source;
    // Grain data for the coating model (phosphor/coating.hpp): median particle size and the
    // share of 254 nm light a grain reflects; 0 when the file gives none.
    double d50_um = 0;
    double reflectance_254nm = 0;
    // Refractive index of the grain in the visible, for the scattering of an LED layer
    // (led/layer_optics.hpp); 0 when the file gives none.
    double refractive_index = 0;
    std::string grain_source;

    std::string emission_model;  // "bands", "lines" or "measured"
    std::vector<EmissionBand> bands;
    std::vector<EmissionLine> lines;
    double line_fwhm_nm = 0;
    Spectrum measured_power;  // for "measured": spectral power as read, on 1 nm
    std::string emission_source;

    std::vector<double> absorption_nm, absorption_rel;  // relative absorption per unit mass
    std::string absorption_source;

    std::optional<double> qe_254nm, qe_365_405nm;
    std::optional<double> qe_185nm;  // under the 184.9 nm mercury line (lamp phosphors)
    std::string qe_source;

    std::vector<double> quench_C, quench_rel;  // relative QE vs temperature (deg C)
    double peak_shift_nm_per_K = 0;
    bool peak_shift_given = false;  // the file states peak_shift_nm_per_K (0 included)
    std::string thermal_source;
};

// Emitted photon distribution on the emission grid, summing to one photon. `shift_nm` moves
// the model bands and lines (thermal peak shift); `width_scale` multiplies every model band's FWHM
// (f-f lines keep theirs); measured spectra are converted P(l) -> P(l) l and neither moves them.
Spectrum emission_photons(const Phosphor& p, double shift_nm = 0.0, double width_scale = 1.0);

// Relative absorption at a wavelength (linear between the listed points; nullopt outside them).
std::optional<double> absorption_at(const Phosphor& p, double nm);
// Relative QE at a temperature (1 at 25 degC where no data; ends held outside the listed range).
double thermal_factor(const Phosphor& p, double temperature_C);

// The temperature a phosphor's QE and emission data refer to (the first point of every built-in
// quenching table; common practice, no source).
inline constexpr double kThermalReferenceC = 25.0;
// The warning owed when a phosphor without quenching data is used at `temperature_C`: "no
// quenching data for <id>: treated as constant with temperature"; nullopt when it has data or the
// temperature is the reference temperature (then nothing is assumed).
std::optional<std::string> missing_thermal_data_warning(const Phosphor& p, double temperature_C);
// Likewise for a band emitter (model "bands") whose file states no peak shift, used away from the
// reference temperature: "no peak-shift data for <id>: its bands held at their 25 degC position".
std::optional<std::string> missing_peak_shift_warning(const Phosphor& p, double temperature_C);

// Peak wavelength (nm) and FWHM (nm) of the modelled power spectrum, for listings.
struct EmissionSummary {
    double peak_nm = 0, fwhm_nm = 0, centroid_nm = 0;
};
EmissionSummary emission_summary(const Phosphor& p);

// The phosphor library: the built-in files plus any user folders.
class PhosphorLibrary {
public:
    static const PhosphorLibrary& builtin();
    // Built-in phosphors plus every *.toml in the folders (a user's phosphor overrides nothing:
    // a repeated id is an error naming both files).
    static PhosphorLibrary with_folders(const std::vector<std::string>& folders);

    const std::vector<Phosphor>& all() const { return phosphors_; }
    // By id or by an unambiguous abbreviation; throws Error listing near matches.
    const Phosphor& find(const std::string& id_or_abbreviation) const;
    const Phosphor* try_find(const std::string& id_or_abbreviation) const;

    void add(Phosphor p);

private:
    std::vector<Phosphor> phosphors_;
};

// A phosphor known only by a measured emission spectrum (spectral power, CSV): id = file stem.
// Its absorption and QE come from elsewhere (recipe keys, an absorption file).
Phosphor phosphor_from_emission_file(const std::string& path);

// Parses one phosphor description (TOML text); `origin` names it in errors and resolves a
// measured spectrum's relative path.
Phosphor parse_phosphor(const std::string& toml_text, const std::string& origin);

}  // namespace lampwright
