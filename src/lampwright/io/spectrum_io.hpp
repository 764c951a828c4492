#pragma once
// Reading and writing spectra: delimited text, and IES TM-27-14 spectral XML for reading.
//
// Accepted layout: optional '#' comment lines (and trailing '# ...' comments), an optional header
// row, then rows of numbers. The first column is the wavelength in nm; every further column is
// one spectrum (named by the header, or by the file name). Separators: comma, semicolon, tab or
// spaces; unless commas separate the columns, a decimal comma is accepted. Checks: numbers only, no NaN/Inf, strictly
// increasing wavelengths, each within 100-100,000 nm, 380-780 nm covered (CIE 15:2004 minimum colorimetric range), at least
// one positive value. Negative values down to -1 % of the spectrum's maximum are measurement noise:
// they are set to zero and counted in a warning; larger negative values are an error.
//
// Absolute spectra (README, "Absolute photometry"). A text file declares its unit and the lamps'
// electrical input power in full-line comments before or between its rows:
//   # units: W/nm            (or mW/nm, uW/nm, µW/nm, relative; default relative)
//   # power_W: 12.5          (one value for every spectrum of the file, or one per spectrum
//                             column in column order, separated by spaces, ';' or ',')
// The keys are case-insensitive and take ':' or '='; any other comment is only a comment. An IES
// TM-27-14 document's <SpectralQuantity> says what its values are: "flux" is spectral radiant
// flux (W/nm unless the reader is told mW/nm or uW/nm: TM-27-14 has no unit field), "relative"
// is relative; any other quantity (irradiance, radiance, ...) is no flux and is read as relative
// with a warning. Absolute values are converted to W/nm on reading.
#include "lampwright/core/spectrum.hpp"

#include <iosfwd>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace lampwright {

// Wavelengths outside this range (nm) are refused with the file and line, in every format.
inline constexpr double kMinWavelengthNm = 100.0;
inline constexpr double kMaxWavelengthNm = 100000.0;

struct SpectrumReadOptions {
    bool check_range = true;
    bool allow_negative = false;  // for signed tables such as the daylight components S1, S2
    double min_required_nm = 380.0;
    double max_required_nm = 780.0;
    double negative_noise_fraction = 0.01;
    // For spectra whose file declares no unit (--units): a unit spectral_unit_to_W_per_nm knows;
    // empty is relative. A file that declares a different unit is refused.
    std::string units;
    // For spectra whose file gives no power (--power-W); the file's own value wins.
    std::optional<double> power_W;
};

// The factor converting a spectral unit to W/nm: 1 for "W/nm", 1e-3 "mW/nm", 1e-6 "uW/nm" or
// "µW/nm"; 0 for "relative" (no scale); nullopt for anything else.
std::optional<double> spectral_unit_to_W_per_nm(const std::string& unit);
inline constexpr const char* kSpectralUnitsAccepted = "W/nm, mW/nm, uW/nm (or µW/nm) or relative";

struct SpectrumFile {
    std::vector<SampledSpectrum> spectra;
    std::vector<std::string> warnings;  // already prefixed with the source name
};

// `source` names the input in messages (a path, or "stdin"); `stem` names single-column spectra.
SpectrumFile parse_spectrum_text(std::istream& in, const std::string& source, const std::string& stem,
                                 const SpectrumReadOptions& options = {});
// The same over a text already in memory (no copy of it).
SpectrumFile parse_spectrum_text(std::string_view text, const std::string& source, const std::string& stem,
                                 const SpectrumReadOptions& options = {});
// IES TM-27-14 spectral XML: <IESTM2714> ... <SpectralData wavelength="380">0.12</SpectralData> ...
SpectrumFile parse_tm27_xml(const std::string& bytes, const std::string& source, const std::string& stem,
                            const SpectrumReadOptions& options = {});
// A file's content in either format (XML when it starts with '<', delimited text otherwise).
SpectrumFile parse_spectrum_bytes(const std::string& bytes, const std::string& source, const SpectrumReadOptions& options = {});
SpectrumFile read_spectrum_file(const std::string& path, const SpectrumReadOptions& options = {});

// A file that must hold exactly one spectrum (any range), resampled to 1 nm; InputError otherwise.
Spectrum read_single_spectrum(const std::string& path);

// Writes "wavelength_nm,<name>" rows at 1 nm.
void write_spectrum_csv(std::ostream& out, const Spectrum& s, const std::string& column = "value");

// The file name without folder and extension ("lots/lamp_07.csv" -> "lamp_07").
std::string file_stem(const std::string& path);

}  // namespace lampwright
