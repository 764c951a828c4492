#include "lampwright/colour/cie_tables.hpp"

#include "lampwright/core/embedded_data.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/core/interpolation.hpp"
#include "lampwright/io/spectrum_io.hpp"

#include <fmt/format.h>

#include <sstream>
#include <string>

namespace lampwright {

namespace {

std::vector<SampledSpectrum> load_table(const std::string& path) {
    std::istringstream in{std::string(embedded_file(path))};
    SpectrumReadOptions options;
    options.check_range = false;
    options.allow_negative = true;
    return parse_spectrum_text(in, "data/" + path, file_stem(path), options).spectra;
}

// Sprague to 1 nm, then onto 360-830 nm (nearest value outside the table).
std::vector<double> to_colour_range(const SampledSpectrum& s) {
    return colour_range_values(resample_to_1nm(s));
}

ColourMatchingFunctions load_cmfs(const std::string& path) {
    const auto table = load_table(path);
    if (table.size() != 3) throw Error("data/" + path + " must have three columns xbar, ybar, zbar");
    ColourMatchingFunctions c;
    for (int i = 0; i < 3; ++i) c.xyz[i] = to_colour_range(table[i]);
    return c;
}

}  // namespace

const ColourMatchingFunctions& colour_matching_functions(Observer observer) {
    static const ColourMatchingFunctions two = load_cmfs("cie/cie1931_2deg_cmf.csv");
    static const ColourMatchingFunctions ten = load_cmfs("cie/cie1964_10deg_cmf.csv");
    return observer == Observer::cie1931_2deg ? two : ten;
}

const std::array<Spectrum, 3>& daylight_components() {
    static const std::array<Spectrum, 3> components = [] {
        const auto table = load_table("cie/cie_daylight_components.csv");
        std::array<Spectrum, 3> out;
        for (int i = 0; i < 3; ++i) {
            const auto& s = table.at(static_cast<std::size_t>(i));
            out[i].name = s.name;
            out[i].first_nm = static_cast<int>(s.wavelengths_nm.front());
            for (int nm = out[i].first_nm; nm <= static_cast<int>(s.wavelengths_nm.back()); ++nm)
                out[i].values.push_back(interpolate_linear(s.wavelengths_nm, s.values, nm));
        }
        return out;
    }();
    return components;
}

const std::array<std::vector<double>, 14>& cie133_test_samples() {
    static const std::array<std::vector<double>, 14> samples = [] {
        const auto table = load_table("cie/cie133_tcs.csv");
        if (table.size() != 14) throw Error("data/cie/cie133_tcs.csv must hold TCS01-TCS14");
        std::array<std::vector<double>, 14> out;
        for (std::size_t i = 0; i < 14; ++i) out[i] = to_colour_range(table[i]);
        return out;
    }();
    return samples;
}

const std::array<std::vector<double>, kCesCount>& cie224_colour_evaluation_samples() {
    static const std::array<std::vector<double>, kCesCount> samples = [] {
        const std::string path = "cie/cie224_ces99.csv";
        const auto table = load_table(path);
        if (table.size() != kCesCount) throw Error("data/" + path + " must hold CES01-CES99");
        std::array<std::vector<double>, kCesCount> out;
        for (std::size_t i = 0; i < out.size(); ++i) {
            const auto& s = table[i];
            if (s.wavelengths_nm.size() != static_cast<std::size_t>(kCesSize) || s.wavelengths_nm.front() != kCesFirstNm ||
                s.wavelengths_nm.back() != kCesLastNm)
                throw Error("data/" + path + " must cover 380-780 nm at 1 nm");
            out[i] = s.values;
        }
        return out;
    }();
    return samples;
}

SampledSpectrum cie_fl_table(int n) {
    static const std::vector<SampledSpectrum> table = load_table("cie/cie_fl_series.csv");
    if (n < 1 || n > static_cast<int>(table.size())) throw Error(fmt::format("there is no CIE illuminant FL{}", n));
    return table[static_cast<std::size_t>(n - 1)];
}

Spectrum cie_fl_illuminant(int n) { return resample_to_1nm(cie_fl_table(n)); }

}  // namespace lampwright
