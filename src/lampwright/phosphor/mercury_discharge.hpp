#pragma once
// The visible lines of a low-pressure mercury discharge, as a fluorescent lamp shows them: their
// share of the lamp's visible (380-780 nm) radiant output and their ratios, per lamp type.
// Values: data/mercury/low_pressure_lines.toml, derived from CIE 15:2004 Table T.6 (FL1-FL12) by
// tools/derive_lamp_phosphors.cpp.
#include <array>
#include <string>
#include <vector>

namespace lampwright {

struct BlendComponent;

// The line groups a 5 nm table resolves: 404.7, 435.8, 546.1 nm and the 577.0/579.1 nm pair
// (positions: NIST atomic spectra database, from memory).
inline constexpr std::array<double, 4> kMercuryLineGroupsNm{404.7, 435.8, 546.1, 578.0};

struct MercuryLineSet {
    std::string lamp_type;                // "halophosphate", "tri-band", "broadband"
    double visible_fraction = 0;          // of the lamp's 380-780 nm radiant output
    std::array<double, 4> relative_power{};  // per group, 435.8 nm = 1
    std::string source;                   // where the numbers come from, in words
};

// The ultraviolet lines as they reach the coating (data/mercury/uv_lines.toml, from memory).
struct MercuryUvLines {
    double photon_fraction_185nm = 0;  // of the UV photons (184.9 + 253.7 nm), at 184.9 nm
    std::string source_185nm;
    double relative_power_365nm = 0;   // 365 nm group / 435.8 nm line, as the discharge emits them
    double wavelength_365nm = 0;
    std::string source_365nm;
};
const MercuryUvLines& mercury_uv_lines();
inline constexpr double kMercury185Nm = 184.9;

// The lamp types of the data file, in its order.
const std::vector<MercuryLineSet>& mercury_line_sets();
// One lamp type; throws Error naming the known types for another.
const MercuryLineSet& mercury_line_set(const std::string& lamp_type);

// The lamp type a blend's coating belongs to, when the recipe does not say: "halophosphate"
// when a calcium halophosphate carries at least half of the mass; "tri-band" when every
// component is a rare-earth line emitter (Eu3+, Tb3+) or a blue Eu2+ band peaking below 490 nm;
// otherwise "broadband" (the de-luxe and high-CRI coatings). A naming rule of the trade (common
// practice, no source).
std::string infer_lamp_type(const std::vector<BlendComponent>& components);

}  // namespace lampwright
