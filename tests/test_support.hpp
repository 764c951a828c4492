#pragma once
// Helpers shared by the test files: paths of the external reference data, a reader for
// colord-data's CGATS-like spectral files, printed CIE values, and points off the Planckian locus;
// temporary folders, shell quoting, whole-file reads and runs of the lampwright command line
// (LAMPWRIGHT_CLI); example recipes and fit problems built from them.
#include "lampwright/colour/assessment.hpp"
#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/design/optimiser.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/core/spectrum.hpp"
#include "lampwright/io/spectrum_io.hpp"
#include "lampwright/design/targets.hpp"
#include "lampwright/colour/temperature.hpp"

#include <doctest/doctest.h>

#include <sys/wait.h>
#include <unistd.h>

#include <atomic>
#include <chrono>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <optional>
#include <sstream>
#include <string>
#include <system_error>
#include <vector>

namespace lwtest {

// Cells of a CSV line (RFC 4180 quotes, as csv_line writes them).
inline std::vector<std::string> csv_cells(const std::string& line) {
    std::vector<std::string> cells{""};
    bool quoted = false;
    for (std::size_t i = 0; i < line.size(); ++i) {
        const char c = line[i];
        if (quoted) {
            if (c == '"' && i + 1 < line.size() && line[i + 1] == '"') cells.back() += '"', ++i;
            else if (c == '"') quoted = false;
            else cells.back() += c;
        } else if (c == '"') {
            quoted = true;
        } else if (c == ',') {
            cells.emplace_back();
        } else {
            cells.back() += c;
        }
    }
    return cells;
}

// The cell of column `name` in a CSV row ("" where the row is shorter); fails the test when the
// header has no such column.
inline std::string cell(const std::vector<std::string>& header, const std::vector<std::string>& row, const std::string& name) {
    for (std::size_t i = 0; i < header.size(); ++i)
        if (header[i] == name) return i < row.size() ? row[i] : "";
    FAIL("no column " << name);
    return "";
}

// The lines of a text, empty ones included.
inline std::vector<std::string> text_lines(const std::string& text) {
    std::vector<std::string> v;
    std::istringstream in(text);
    for (std::string l; std::getline(in, l);) v.push_back(l);
    return v;
}

// A library phosphor as a blend component of mass fraction w (label = its id).
inline lampwright::BlendComponent library_component(const std::string& id, double w) {
    lampwright::BlendComponent c;
    c.phosphor = lampwright::PhosphorLibrary::builtin().find(id);
    c.label = c.phosphor.id;
    c.mass_fraction = w;
    return c;
}

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

// A fresh folder under the system temp folder, removed at the end of the test.
// (Removed with everything in it when the object goes out of scope; the name holds the process
// id, a clock stamp and a counter, so tests running in parallel never share a folder.)
struct TempDir {
    std::filesystem::path path;
    explicit TempDir(const std::string& prefix = "lampwright_test") {
        static std::atomic<int> counter{0};
        const auto stamp = std::chrono::steady_clock::now().time_since_epoch().count();
        path = std::filesystem::temp_directory_path() /
               (prefix + "_" + std::to_string(::getpid()) + "_" + std::to_string(stamp) + "_" + std::to_string(counter++));
        std::filesystem::remove_all(path);
        std::filesystem::create_directories(path);
    }
    ~TempDir() {
        std::error_code ec;
        std::filesystem::remove_all(path, ec);
    }
    TempDir(const TempDir&) = delete;
    TempDir& operator=(const TempDir&) = delete;
    // The path of `name` in the folder (nothing is created).
    std::string file(const std::string& name) const { return (path / name).string(); }
    // Writes `text` to `name` in the folder, making the sub-folders it names; returns its path.
    std::string write(const std::string& name, const std::string& text) const {
        const std::filesystem::path p = path / name;
        std::filesystem::create_directories(p.parent_path());
        std::ofstream(p) << text;
        return p.string();
    }
};

// `s` as one word for the POSIX shell: in single quotes, each ' written as '\''.
inline std::string quote(const std::string& s) {
    std::string q = "'";
    for (char c : s) {
        if (c == '\'') q += "'\\''";
        else q += c;
    }
    return q + "'";
}

// The whole content of a file ("" when it cannot be read).
inline std::string slurp(const std::filesystem::path& path) {
    std::ifstream in(path);
    std::ostringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

// What a run of the lampwright command line gave.
struct CliRun {
    int exit_code = -1;    // -1 when the process did not exit normally
    bool crashed = false;  // killed by a signal
    std::string out, err;
};

// Runs `lampwright <args>` with stdout and stderr captured to files.
// (LAMPWRIGHT_CLI, through the shell; the files are in a fresh temp folder. `args` go on the
// command line as given: quote() what needs it. Standard input is `stdin_path` when given, else
// the test's own.)
inline CliRun run_cli(const std::string& args, const std::string& stdin_path = "") {
    const TempDir dir("lampwright_cli");
    const std::string out = dir.file("stdout.txt"), err = dir.file("stderr.txt");
    std::string cmd = quote(LAMPWRIGHT_CLI) + " " + args + " >" + quote(out) + " 2>" + quote(err);
    if (!stdin_path.empty()) cmd += " <" + quote(stdin_path);
    const int status = std::system(cmd.c_str());
    CliRun r;
    if (status != -1 && WIFEXITED(status)) {
        r.exit_code = WEXITSTATUS(status);
        // The shell reports a child killed by signal N as exit status 128 + N.
        r.crashed = r.exit_code > 128;
    } else {
        r.crashed = true;
    }
    r.out = slurp(out);
    r.err = slurp(err);
    return r;
}

// Runs lampwright with the arguments, each quoted for the shell, standard input empty.
inline CliRun run_cli_args(const std::vector<std::string>& args) {
    std::string line;
    for (const auto& a : args) line += (line.empty() ? "" : " ") + quote(a);
    return run_cli(line, "/dev/null");
}

// examples/recipes/<name> in the source tree.
inline std::string example_recipe(const std::string& name) {
    return std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/recipes/" + name;
}

// A fit problem on a shipped example recipe.
inline lampwright::FitProblem fit_problem(const std::string& recipe, const lampwright::Target& t, lampwright::FitObjective o) {
    lampwright::FitProblem p;
    p.blend = lampwright::load_recipe(example_recipe(recipe)).blend;
    p.target = t;
    p.objective = o;
    return p;
}

// CIE 1976 u'v' distance of an assessed light from a target chromaticity.
inline double duv_prime(const lampwright::Assessment& a, const lampwright::Chromaticity& target) {
    const lampwright::UV t = lampwright::uv_1976_from_xy(target);
    return std::hypot(a.uv_prime.u - t.u, a.uv_prime.v - t.v);
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
