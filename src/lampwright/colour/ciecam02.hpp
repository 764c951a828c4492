#pragma once
// CIECAM02 colour appearance model, forward direction (CIE 159:2004 "A colour appearance model
// for colour management systems: CIECAM02"; Moroney, Fairchild, Hunt, Li, Luo and Newman 2002,
// "The CIECAM02 color appearance model", IS&T/SID 10th Color Imaging Conference), and the uniform
// colour space CAM02-UCS built on it (Luo, Cui and Li 2006, "Uniform colour spaces based on
// CIECAM02 colour appearance model", Color Res. Appl. 31:4, 320-330).
#include "lampwright/colour/colorimetry.hpp"

#include <optional>

namespace lampwright {

struct Ciecam02ViewingConditions {
    double adapting_luminance_cd_m2 = 100;  // L_A
    double background_y = 20;               // Y_b, relative to the white's Y
    // Surround (CIE 159:2004 Table 1): average F = 1.0, c = 0.69, N_c = 1.0.
    double f = 1.0, c = 0.69, nc = 1.0;
    // Degree of adaptation D; empty: D = F (1 - exp((-L_A - 42)/92) / 3.6) (CIE 159:2004 eq. 7).
    std::optional<double> degree_of_adaptation;
};

// The viewing conditions CIE 224:2017 (and ANSI/IES TM-30-20) prescribe: L_A = 100 cd/m^2,
// Y_b = 20, average surround, illuminant discounted (D = 1).
inline Ciecam02ViewingConditions cie224_viewing_conditions() {
    Ciecam02ViewingConditions v;
    v.degree_of_adaptation = 1.0;
    return v;
}

struct Ciecam02Correlates {
    double lightness_J = 0, chroma_C = 0, hue_angle_h = 0;  // h in degrees, [0, 360)
    double brightness_Q = 0, colourfulness_M = 0, saturation_s = 0;
};

// CAM02-UCS J', a', b' (Luo, Cui and Li 2006, Table 2 and eqs. 4-5: K_L = 1, c1 = 0.007,
// c2 = 0.0228): J' = 1.7 J / (1 + 0.007 J), M' = ln(1 + 0.0228 M) / 0.0228, a' = M' cos h,
// b' = M' sin h.
struct Jab {
    double j = 0, a = 0, b = 0;
};
Jab cam02_ucs(const Ciecam02Correlates& c);
// CAM02-UCS colour difference with K_L = 1: the Euclidean distance in J'a'b'.
double cam02_ucs_difference(const Jab& p, const Jab& q);

// The model for one adopted white and one set of viewing conditions. Tristimulus values of the
// white and of the samples on one scale, the white's Y being the Y_w of CIE 159 (normally 100).
class Ciecam02 {
public:
    Ciecam02(const XYZ& white, const Ciecam02ViewingConditions& conditions);
    Ciecam02Correlates forward(const XYZ& sample) const;
    // CAM02-UCS J'a'b' of a sample, the same numbers as cam02_ucs(forward(sample)) without the
    // trigonometry (cos h and sin h are a/|ab| and b/|ab|); for the many samples of CIE 224.
    Jab ucs(const XYZ& sample) const;

private:
    struct Adapted {
        double ra, ga, ba;  // post-adaptation cone responses R'a, G'a, B'a (CIE 159 eq. 13)
    };
    Adapted adapt(const XYZ& sample) const;

    double d_rgb_[3] = {0, 0, 0};  // Y_w D / R_w + 1 - D per channel (CIE 159 eq. 9)
    double fl_ = 0, n_ = 0, nbb_ = 0, z_ = 0, aw_ = 0, c_ = 0, nc_ = 0;
    double fl_quarter_ = 0, chroma_factor_ = 0;  // F_L^0.25, (1.64 - 0.29^n)^0.73
};

}  // namespace lampwright
