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
#include "lampwright/core/spectrum.hpp"

#include <iosfwd>
#include <string>
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
};

struct SpectrumFile {
    std::vector<SampledSpectrum> spectra;
    std::vector<std::string> warnings;  // already prefixed with the source name
};

// `source` names the input in messages (a path, or "stdin"); `stem` names single-column spectra.
SpectrumFile parse_spectrum_text(std::istream& in, const std::string& source, const std::string& stem,
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
