// Build-time generator of generated/precomputed_tables.cpp (see
// src/lampwright/colour/precomputed_tables.hpp): runs the library's own compute_* functions and
// writes their values as constexpr arrays, each double in its shortest exact decimal form, so the
// library reads back the very bits this computation produced.
// Usage (run by CMake): lampwright_generate_tables OUTPUT.cpp
#include "lampwright/colour/colour_fidelity.hpp"
#include "lampwright/colour/colour_rendering.hpp"
#include "lampwright/colour/precomputed_tables.hpp"
#include "lampwright/colour/temperature.hpp"

#include <fmt/format.h>

#include <cstdio>
#include <exception>
#include <stdexcept>
#include <fstream>
#include <string>
#include <vector>

// This program is linked against the library's objects without a generated table: every table
// is "not generated" here, so the library computes it.
namespace lampwright::precomputed {
std::span<const double> ohno_planck_table() { return {}; }
std::span<const double> robertson_lines() { return {}; }
std::span<const double> cie133_planck_reference() { return {}; }
std::span<const double> cie224_reference_jab() { return {}; }
}  // namespace lampwright::precomputed

namespace {

void write_table(std::string& out, const char* name, const std::vector<double>& values) {
    out += fmt::format("constexpr double {}_values[{}] = {{\n", name, values.size());
    for (std::size_t i = 0; i < values.size(); ++i) out += fmt::format("{}{}", values[i], (i + 1) % 8 == 0 ? ",\n" : ", ");
    out += "};\n";
}

}  // namespace

int main(int argc, char** argv) {
    if (argc != 2) {
        std::fprintf(stderr, "usage: lampwright_generate_tables OUTPUT.cpp\n");
        return 2;
    }
    try {
        std::string body =
            "// Generated at build time by tools/generate_tables.cpp from the library's compute_* functions. Do not edit.\n"
            "#include \"lampwright/colour/precomputed_tables.hpp\"\n\nnamespace lampwright::precomputed {\nnamespace {\n";
        write_table(body, "ohno", lampwright::compute_ohno_planck_table());
        write_table(body, "robertson", lampwright::compute_robertson_lines());
        write_table(body, "cie133", lampwright::compute_cie133_planck_reference_table());
        write_table(body, "cie224", lampwright::compute_cie224_reference_jab_table());
        body += "}  // namespace\n\n"
                "std::span<const double> ohno_planck_table() { return ohno_values; }\n"
                "std::span<const double> robertson_lines() { return robertson_values; }\n"
                "std::span<const double> cie133_planck_reference() { return cie133_values; }\n"
                "std::span<const double> cie224_reference_jab() { return cie224_values; }\n\n"
                "}  // namespace lampwright::precomputed\n";
        const std::string tmp = std::string(argv[1]) + ".tmp";
        std::ofstream f(tmp, std::ios::binary);
        f << body;
        f.close();
        if (!f) throw std::runtime_error("cannot write " + tmp);
        if (std::rename(tmp.c_str(), argv[1]) != 0) throw std::runtime_error(std::string("cannot replace ") + argv[1]);
    } catch (const std::exception& e) {
        std::fprintf(stderr, "lampwright_generate_tables: %s\n", e.what());
        return 1;
    }
    return 0;
}
