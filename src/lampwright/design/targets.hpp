#pragma once
// Target whites for fitting a blend: a chromaticity, a CCT with Duv, an ANSI C78.377 nominal CCT
// class (solid-state lighting: centre and quadrangle) or an ANSI C78.376 fluorescent lamp colour
// (centre and an n-step MacAdam ellipse). Tables: data/targets (sources in data/targets/README.md).
// All chromaticities are CIE 1931 2-degree x, y.
#include "lampwright/colour/colorimetry.hpp"

#include <array>
#include <optional>
#include <string>
#include <vector>

namespace lampwright {

// A MacAdam-type ellipse: g11 dx^2 + 2 g12 dx dy + g22 dy^2 = n^2 is the n-step contour
// (MacAdam 1942, JOSA 32, 247; one step = one standard deviation of colour matching).
struct MacAdamEllipse {
    Chromaticity centre;
    double a = 0, b = 0, theta_deg = 0;  // one-step semi-axes in x, y; angle of a from the x axis
    double g11 = 0, g12 = 0, g22 = 0;
};
// g from the semi-axes: g11 = cos^2/a^2 + sin^2/b^2, g12 = sin cos (1/a^2 - 1/b^2),
// g22 = sin^2/a^2 + cos^2/b^2 (the quadratic form of the rotated ellipse).
MacAdamEllipse macadam_ellipse(const Chromaticity& centre, double a, double b, double theta_deg);
// Distance from the centre in steps: sqrt(g11 dx^2 + 2 g12 dx dy + g22 dy^2).
double macadam_steps(const MacAdamEllipse& e, const Chromaticity& xy);

// The point at CCT T and distance Duv from the Planckian locus: planck_uv(T) moved by Duv along
// the locus normal in CIE 1960 (u, v), Duv > 0 above the locus (CIE 15:2004 9.5; Ohno 2014).
Chromaticity xy_from_cct_duv(double cct_K, double duv);

// ANSI C78.377-2017 Table 1.
struct AnsiC78377Class {
    int nominal_K = 0;
    double cct_K = 0, cct_tolerance_K = 0, duv_centre = 0;
    Chromaticity centre;  // as tabulated
};
inline constexpr double kAnsiC78377DuvTolerance = 0.006;
const std::vector<AnsiC78377Class>& ansi_c78377_classes();
// By nominal CCT (2200 ... 6500); throws Error listing the classes.
const AnsiC78377Class& ansi_c78377_class(int nominal_K);
// Quadrangle corners, computed: (T - tol, Duv_c - 0.006), (T + tol, Duv_c - 0.006),
// (T + tol, Duv_c + 0.006), (T - tol, Duv_c + 0.006).
std::array<Chromaticity, 4> ansi_c78377_quadrangle(const AnsiC78377Class& c);
// Whether a chromaticity lies in the class's quadrangle (its CCT and Duv within the limits).
bool inside_ansi_c78377(const AnsiC78377Class& c, const Chromaticity& xy);

// ANSI C78.376 fluorescent lamp colours (values from memory, see data/targets/README.md).
struct FluorescentLampColour {
    std::string name;          // "F4100"
    MacAdamEllipse ellipse;    // one-step ellipse at the lamp's centre
    std::string source;        // "from memory"
};
const std::vector<FluorescentLampColour>& ansi_c78376_colours();
// By name ("F4100", "f4100" or "4100"); throws Error listing the names.
const FluorescentLampColour& ansi_c78376_colour(const std::string& name);
// The standard's tolerance: 4-step ellipses (ANSI C78.376, confirmed).
inline constexpr double kAnsiC78376Steps = 4.0;

// ANSI/IES TM-30-20 Annex E design-intent levels P1-P3 (Preference) and F1-F3 (Fidelity):
// criteria on Rf, Rf,h1, Rcs,h1 (per cent) and Rg; every value from memory (data/targets/README.md).
struct Tm30DesignLevel {
    std::string name;  // "P1"
    std::optional<double> min_rf, min_rf_h1, min_rcs_h1_percent, max_rcs_h1_percent, min_rg;
    std::string source;  // "from memory: ..."
};
const std::vector<Tm30DesignLevel>& tm30_design_levels();
// By name ("P1" or "p1"); throws Error listing the names.
const Tm30DesignLevel& tm30_design_level(const std::string& name);
// The caution printed wherever a level is used.
inline constexpr const char* kTm30LevelCaution =
    "TM-30-20 Annex E design-intent criteria are from memory in this tool: check them against the standard";

// One-step ellipse for a colour shift or distance at an arbitrary centre: the ANSI C78.376 ellipse
// whose centre is nearest, moved there (common practice, no source; ellipse values from memory).
MacAdamEllipse nearest_step_ellipse(const Chromaticity& centre);

struct Target {
    enum class Kind { chromaticity, cct_duv, ansi_c78377, ansi_c78376 };
    Kind kind = Kind::chromaticity;
    std::string description;  // for reports, e.g. "ANSI C78.377 3500 K class"
    Chromaticity xy;          // the aim point
    std::optional<MacAdamEllipse> ellipse;  // one-step ellipse (ANSI C78.376 targets)
    double ellipse_steps = 0;               // its tolerance in steps (0 = none)
    std::optional<AnsiC78377Class> ansi_class;
};
Target target_xy(double x, double y);
Target target_uv_prime(double u_prime, double v_prime);
Target target_cct(double cct_K, double duv = 0.0);
Target target_ansi_c78377(int nominal_K);
Target target_ansi_c78376(const std::string& lamp, double steps = kAnsiC78376Steps);

}  // namespace lampwright
