#pragma once
// Helpers shared by the test files: paths of the external reference data, a reader for
// colord-data's CGATS-like spectral files, printed CIE values, and points off the Planckian locus.
#include "lampwright/colorimetry.hpp"
#include "lampwright/spectrum.hpp"
#include "lampwright/spectrum_io.hpp"
#include "lampwright/temperature.hpp"

#include <doctest/doctest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

namespace lwtest {

// ../shared/reference/<name>: published CIE tables, read in place (never copied into the repo).
inline std::string reference_file(const std::string& name) {
    return std::string(LAMPWRIGHT_SOURCE_DIR) + "/../shared/reference/" + name;
}
// ../shared/cie-tables/<name>
inline std::string cie_tables_file(const std::string& name) {
    return std::string(LAMPWRIGHT_SOURCE_DIR) + "/../shared/cie-tables/" + name;
}
inline const std::string kColordDir = "/usr/share/colord";

inline bool file_exists(const std::string& path) {
    std::error_code ec;
    return std::filesystem::is_regular_file(path, ec);
}

// Reads a reference table as published: no range check, signed values kept.
inline lampwright::SpectrumFile read_table(const std::string& path) {
    lampwright::SpectrumReadOptions options;
    options.check_range = false;
    options.allow_negative = true;
    return lampwright::read_spectrum_file(path, options);
}

// A colord-data spectral file (SPECTRAL_START_NM, SPECTRAL_END_NM, SPECTRAL_BANDS, then rows of
// values between BEGIN_DATA and END_DATA, optionally led by a sample id).
struct ColordFile {
    double start_nm = 0, end_nm = 0;
    int bands = 0;
    std::vector<std::string> ids;
    std::vector<std::vector<double>> rows;
    double wavelength(int i) const { return start_nm + i * (end_nm - start_nm) / (bands - 1); }
};

inline std::optional<ColordFile> read_colord(const std::string& path) {
    std::ifstream in(path);
    if (!in) return std::nullopt;
    ColordFile f;
    bool data = false;
    std::string line;
    while (std::getline(in, line)) {
        std::istringstream ss(line);
        std::string key;
        if (!(ss >> key)) continue;
        if (key == "SPECTRAL_START_NM") ss >> f.start_nm;
        else if (key == "SPECTRAL_END_NM") ss >> f.end_nm;
        else if (key == "SPECTRAL_BANDS") ss >> f.bands;
        else if (key == "BEGIN_DATA") data = true;
        else if (key == "END_DATA") data = false;
        else if (data) {
            std::istringstream row(line);
            std::string tok, id;
            std::vector<double> values;
            while (row >> tok) {
                char* end = nullptr;
                const double v = std::strtod(tok.c_str(), &end);
                if (end == tok.c_str() || *end != '\0') id = tok;
                else values.push_back(v);
            }
            f.ids.push_back(id);
            f.rows.push_back(values);
        }
    }
    return f;
}

// CIE 15:2004 Table T.8: printed x, y, CCT and Ra of FL1-FL12. x, y confirmed; CCT and Ra partly
// from memory (see ../shared/standards-facts.md).
struct PrintedFl {
    int n;
    double x, y, cct_K, ra;
};
inline constexpr PrintedFl kCie15TableT8[12] = {
    {1, 0.3131, 0.3371, 6430, 76}, {2, 0.3721, 0.3751, 4230, 64},  {3, 0.4091, 0.3941, 3450, 57},
    {4, 0.4402, 0.4031, 2940, 51}, {5, 0.3138, 0.3452, 6350, 72},  {6, 0.3779, 0.3882, 4150, 59},
    {7, 0.3129, 0.3292, 6500, 90}, {8, 0.3458, 0.3586, 5000, 95},  {9, 0.3741, 0.3727, 4150, 90},
    {10, 0.3458, 0.3588, 5000, 81}, {11, 0.3805, 0.3769, 4000, 83}, {12, 0.4370, 0.4042, 3000, 83},
};

// The CIE 1960 uv point at signed distance duv from the Planckian locus point of T, along the
// locus normal; duv > 0 is above the locus (towards larger v), as Duv is defined (Ohno 2014).
inline lampwright::UV off_locus(double temperature_K, double duv) {
    const lampwright::UV p = lampwright::planck_uv(temperature_K);
    const double h = temperature_K * 1e-5;
    const lampwright::UV a = lampwright::planck_uv(temperature_K - h), b = lampwright::planck_uv(temperature_K + h);
    const double du = b.u - a.u, dv = b.v - a.v, len = std::hypot(du, dv);
    double nu = -dv / len, nv = du / len;
    if (nv < 0) {
        nu = -nu;
        nv = -nv;
    }
    return {p.u + duv * nu, p.v + duv * nv};
}

// CCT by brute force: minimise the CIE 1960 uv distance to planck_uv(T) over T, first on a grid of
// 6 % steps in T, then by golden-section search inside the bracket of the best grid point (the
// distance is unimodal along the locus within |Duv| <= 0.05). Independent of the library's Ohno
// and Robertson code; relies only on planck_uv().
inline double brute_force_cct(const lampwright::UV& p, double t_min = 900.0, double t_max = 120000.0) {
    auto d2 = [&](double ln_t) {
        const lampwright::UV q = lampwright::planck_uv(std::exp(ln_t));
        return (q.u - p.u) * (q.u - p.u) + (q.v - p.v) * (q.v - p.v);
    };
    const double a = std::log(t_min), b = std::log(t_max);
    constexpr int kGrid = 80;
    double best = a, best_d = d2(a);
    for (int i = 1; i <= kGrid; ++i) {
        const double t = a + (b - a) * i / kGrid;
        const double d = d2(t);
        if (d < best_d) {
            best_d = d;
            best = t;
        }
    }
    const double h = (b - a) / kGrid;
    double lo = best - h, hi = best + h;
    const double g = (std::sqrt(5.0) - 1) / 2;
    double c = hi - g * (hi - lo), d = lo + g * (hi - lo);
    double fc = d2(c), fd = d2(d);
    for (int i = 0; i < 45; ++i) {
        if (fc < fd) {
            hi = d;
            d = c;
            fd = fc;
            c = hi - g * (hi - lo);
            fc = d2(c);
        } else {
            lo = c;
            c = d;
            fc = fd;
            d = lo + g * (hi - lo);
            fd = d2(d);
        }
    }
    return std::exp(0.5 * (lo + hi));
}

}  // namespace lwtest

// Skips the rest of a test case, with a message, when an external file is absent.
#define LW_SKIP_UNLESS_FILE(path)                                                   \
    do {                                                                            \
        if (!lwtest::file_exists(path)) {                                           \
            MESSAGE("skipped: " << (path) << " is not present on this machine");     \
            return;                                                                 \
        }                                                                           \
    } while (0)
