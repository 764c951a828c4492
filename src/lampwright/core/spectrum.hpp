#pragma once
// Spectral power distributions: as measured (any wavelengths) and on lampwright's 1 nm grid.
#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace lampwright {

// A spectrum as read from a file: strictly increasing wavelengths in nm, one value each.
struct SampledSpectrum {
    std::string name;
    std::vector<double> wavelengths_nm;
    std::vector<double> values;
    // Absolute spectra: the values are spectral radiant flux in W/nm (converted on reading from
    // mW/nm or uW/nm); otherwise relative, with no scale. The electrical input power of the
    // lamp, where it is known, gives its luminous efficacy.
    bool absolute = false;
    std::optional<double> electrical_power_W;

    // Constructors rather than an aggregate, so the many relative spectra built as
    // {name, wavelengths, values} need not spell out the photometry fields.
    SampledSpectrum() = default;
    SampledSpectrum(std::string name_, std::vector<double> wavelengths, std::vector<double> values_, bool absolute_ = false,
                    std::optional<double> power_W = std::nullopt)
        : name(std::move(name_)), wavelengths_nm(std::move(wavelengths)), values(std::move(values_)), absolute(absolute_),
          electrical_power_W(power_W) {}
};

// A spectrum on a 1 nm grid starting at an integer wavelength. All computation uses this type.
struct Spectrum {
    std::string name;
    int first_nm = 0;
    std::vector<double> values;
    bool absolute = false;                     // values in W/nm (see SampledSpectrum)
    std::optional<double> electrical_power_W;  // the lamp's electrical input power, where known

    Spectrum() = default;
    Spectrum(std::string name_, int first, std::vector<double> values_, bool absolute_ = false, std::optional<double> power_W = std::nullopt)
        : name(std::move(name_)), first_nm(first), values(std::move(values_)), absolute(absolute_), electrical_power_W(power_W) {}

    int last_nm() const { return first_nm + static_cast<int>(values.size()) - 1; }
    bool covers(int nm) const { return nm >= first_nm && nm <= last_nm(); }
    // Value at an integer wavelength; outside the data, the nearest end value (CIE 15:2004, 7.2.2.1).
    double at_nearest(int nm) const;
};

// The colorimetric range used for every tristimulus sum: 360-830 nm at 1 nm (CIE 15:2004, 7.1).
inline constexpr int kColourFirstNm = 360;
inline constexpr int kColourLastNm = 830;
inline constexpr int kColourSize = kColourLastNm - kColourFirstNm + 1;

// The spectrum's values on 360-830 nm, extended beyond its data by the nearest value.
std::vector<double> colour_range_values(const Spectrum& s);
void colour_range_values(const Spectrum& s, double* out);  // out holds kColourSize values

// Integral over the 1 nm grid (sum x 1 nm, CIE 15:2004 7.2 summation). The one integration rule.
double integrate_1nm(const double* values, std::size_t n);
inline double integrate_1nm(const std::vector<double>& v) { return integrate_1nm(v.data(), v.size()); }
// Integral of the spectrum over the whole range it was given on (radiant quantity).
double radiant_integral(const Spectrum& s);

Spectrum scaled(const Spectrum& s, double factor);

// Adds a spectral line of total power `power` at `nm`, shared between the two 1 nm grid points
// around it so that its power and centroid are kept (nothing is added outside the grid).
void add_line(Spectrum& s, double nm, double power);

}  // namespace lampwright
