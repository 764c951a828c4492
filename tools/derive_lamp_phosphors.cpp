// Derives the emission spectra of the fluorescent-lamp phosphors, and the visible mercury lines of
// the discharge, from CIE 15:2004 Table T.6 (the FL1-FL12 illuminants, data/cie/cie_fl_series.csv).
//
// Method (README "Lamp phosphors derived from the CIE tables"):
//   lamp_k(l) = sum_p c_kp sum_j a_pj g_pj(l; theta) + sum_m h_km hg_m(l), seen through the
//   table's 5 nm triangular bandpass (core/bandpass.hpp) at its 5 nm points, 380-780 nm.
//   g_pj: one line (Gaussian in wavelength) or band (Gaussian in wavenumber) of phosphor p, at a
//   position fixed by the activator (from memory) or, for bands, free within stated bounds;
//   theta: widths (and band positions); a_pj: the phosphor's own line strengths, the same in every
//   lamp of a group; c_kp, h_km: each lamp's phosphor and mercury amounts.
//   For given theta the model is bilinear in (a, c, h): alternating non-negative least squares
//   (Lawson-Hanson, core/nonnegative_least_squares.hpp) solves it; theta is found by BOBYQA
//   (NLopt) minimising the sum over the group's lamps of the squared relative residuals.
//   Groups: tri-band FL10-FL12 (Eu3+, Tb3+, Eu2+ aluminate); halophosphate FL1-FL6 (one Sb3+ band
//   and two Mn2+ bands, for the fluorine- and chlorine-rich ends); broadband FL7-FL9 (the
//   de-luxe phosphors, with the phosphors of the first two groups held fixed).
//
// Usage: derive_lamp_phosphors DATA_DIR [--write]
//   prints the fit; with --write, replaces the blocks between "# BEGIN derived emission" and
//   "# END derived emission" in the phosphor files and writes data/mercury/low_pressure_lines.toml.
#include "lampwright/colour/cie_tables.hpp"
#include "lampwright/core/bandpass.hpp"
#include "lampwright/core/nonnegative_least_squares.hpp"
#include "lampwright/phosphor/phosphor.hpp"
#include "lampwright/phosphor/spectral_unmixing.hpp"

#include <fmt/format.h>
#include <nlopt.hpp>

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <tuple>
#include <fstream>
#include <iostream>
#include <map>
#include <sstream>
#include <stdexcept>
#include <string>
#include <vector>

namespace lw = lampwright;

namespace {

constexpr int kBandpassNm = 5;  // CIE 15:2004 Table T.6 is a 5 nm table (core/bandpass.hpp)

struct Param {
    std::string name;
    double value, lo, hi;
};

struct Emitter {
    bool band = false;
    double nm = 0;       // lines: fixed position; bands: initial position (when position_param < 0: fixed)
    int position_param = -1;
    int width_param = -1;
    double fixed_fwhm = 0;  // when width_param < 0
    std::string transition;
};

struct Model {
    std::string key, file;  // file: data/phosphors/<file> whose derived block is rewritten ("" for none)
    std::vector<Emitter> emitters;
    std::vector<double> a;  // photon shares of the emitters, summing to one
    bool fixed = false;     // derived in an earlier group: shape held
    std::string memory_note;  // where the positions and bounds come from
};

struct State {
    std::vector<Param> theta;
    std::vector<Model> models;
};

std::vector<int> table_nm() {
    std::vector<int> nm;
    for (int w = 380; w <= 780; w += 5) nm.push_back(w);
    return nm;
}

double width_of(const Emitter& e, const std::vector<double>& th) { return e.width_param >= 0 ? th[static_cast<std::size_t>(e.width_param)] : e.fixed_fwhm; }
// Bands: the parameter is the peak; lines: it is a shift of the whole manifold from the listed positions.
double position_of(const Emitter& e, const std::vector<double>& th) {
    if (e.position_param < 0) return e.nm;
    const double v = th[static_cast<std::size_t>(e.position_param)];
    return e.band ? v : e.nm + v;
}

lw::Phosphor single(const Emitter& e, const std::vector<double>& th) {
    lw::Phosphor p;
    p.id = "emitter";
    if (e.band) {
        p.emission_model = "bands";
        p.bands.push_back({position_of(e, th), width_of(e, th), 1.0});
    } else {
        p.emission_model = "lines";
        p.lines.push_back({position_of(e, th), 1.0, width_of(e, th)});
    }
    return p;
}

// One emitter's power per emitted photon, as the 5 nm table would show it. Photon shares a_pj
// are what the library's files hold ("weight"); power per photon ~ 1/l (scaled to 555 nm).
std::vector<double> emitter_column(const Emitter& e, const std::vector<double>& th) {
    lw::Spectrum n = lw::emission_photons(single(e, th));
    for (std::size_t k = 0; k < n.values.size(); ++k) n.values[k] *= 555.0 / (n.first_nm + static_cast<double>(k));
    return lw::values_at(lw::triangular_bandpass(n, kBandpassNm), table_nm());
}

std::vector<double> mercury_column(std::size_t g) {
    return lw::values_at(lw::triangular_bandpass(lw::mercury_line_group(g), kBandpassNm), table_nm());
}

struct GroupFit {
    std::vector<std::vector<double>> c;      // [lamp][model in group]
    std::vector<std::array<double, 4>> h;    // [lamp][mercury group]
    std::vector<double> residual;            // relative, per lamp
    double objective = 0;
};

struct Group {
    std::string name;
    std::vector<int> lamps;     // FL numbers
    std::vector<int> models;    // indices into State::models
};

// For fixed theta: alternating NNLS on (a) and (c, h). Updates the free models' a.
GroupFit fit_linear(State& s, const Group& grp, const std::vector<double>& th, int sweeps) {
    const auto nm = table_nm();
    const auto rows = static_cast<Eigen::Index>(nm.size());
    const auto nl = grp.lamps.size();
    // Columns of every emitter of every model in the group.
    std::vector<std::vector<std::vector<double>>> g(grp.models.size());
    for (std::size_t q = 0; q < grp.models.size(); ++q)
        for (const auto& e : s.models[static_cast<std::size_t>(grp.models[q])].emitters) g[q].push_back(emitter_column(e, th));
    std::vector<std::vector<double>> hg;
    for (std::size_t m = 0; m < 4; ++m) hg.push_back(mercury_column(m));
    std::vector<Eigen::VectorXd> lamp;
    for (int k : grp.lamps) {
        const auto t = lw::cie_fl_table(k);
        Eigen::VectorXd v(rows);
        for (Eigen::Index i = 0; i < rows; ++i) v(i) = t.values[static_cast<std::size_t>(i)];
        lamp.push_back(v);
    }
    auto shape = [&](std::size_t q) {
        const auto& md = s.models[static_cast<std::size_t>(grp.models[q])];
        Eigen::VectorXd v = Eigen::VectorXd::Zero(rows);
        for (std::size_t j = 0; j < md.emitters.size(); ++j)
            for (Eigen::Index i = 0; i < rows; ++i) v(i) += md.a[j] * g[q][j][static_cast<std::size_t>(i)];
        return v;
    };
    GroupFit f;
    f.c.assign(nl, std::vector<double>(grp.models.size(), 0.0));
    f.h.assign(nl, {});
    for (int sweep = 0; sweep < sweeps; ++sweep) {
        // (c, h) per lamp.
        for (std::size_t k = 0; k < nl; ++k) {
            Eigen::MatrixXd a(rows, static_cast<Eigen::Index>(grp.models.size() + 4));
            for (std::size_t q = 0; q < grp.models.size(); ++q) a.col(static_cast<Eigen::Index>(q)) = shape(q);
            for (std::size_t m = 0; m < 4; ++m)
                for (Eigen::Index i = 0; i < rows; ++i) a(i, static_cast<Eigen::Index>(grp.models.size() + m)) = hg[m][static_cast<std::size_t>(i)];
            const auto r = lw::nonnegative_least_squares(a / lamp[k].norm(), lamp[k] / lamp[k].norm());
            for (std::size_t q = 0; q < grp.models.size(); ++q) f.c[k][q] = r.x(static_cast<Eigen::Index>(q));
            for (std::size_t m = 0; m < 4; ++m) f.h[k][m] = r.x(static_cast<Eigen::Index>(grp.models.size() + m));
        }
        // a of the free models (shared), with c held; fixed models and mercury per lamp (block columns).
        std::vector<std::pair<std::size_t, std::size_t>> free_cols;  // (q, j)
        for (std::size_t q = 0; q < grp.models.size(); ++q)
            if (!s.models[static_cast<std::size_t>(grp.models[q])].fixed)
                for (std::size_t j = 0; j < g[q].size(); ++j) free_cols.emplace_back(q, j);
        std::vector<std::size_t> fixed_q;
        for (std::size_t q = 0; q < grp.models.size(); ++q)
            if (s.models[static_cast<std::size_t>(grp.models[q])].fixed) fixed_q.push_back(q);
        const auto ncols = free_cols.size() + nl * (fixed_q.size() + 4);
        Eigen::MatrixXd a = Eigen::MatrixXd::Zero(rows * static_cast<Eigen::Index>(nl), static_cast<Eigen::Index>(ncols));
        Eigen::VectorXd b(rows * static_cast<Eigen::Index>(nl));
        for (std::size_t k = 0; k < nl; ++k) {
            const double w = 1.0 / lamp[k].norm();  // each lamp weighted by its own size: relative residuals
            const Eigen::Index r0 = rows * static_cast<Eigen::Index>(k);
            b.segment(r0, rows) = w * lamp[k];
            for (std::size_t c = 0; c < free_cols.size(); ++c) {
                const auto [q, j] = free_cols[c];
                for (Eigen::Index i = 0; i < rows; ++i) a(r0 + i, static_cast<Eigen::Index>(c)) = w * f.c[k][q] * g[q][j][static_cast<std::size_t>(i)];
            }
            std::size_t col = free_cols.size() + k * (fixed_q.size() + 4);
            for (std::size_t q : fixed_q) a.block(r0, static_cast<Eigen::Index>(col++), rows, 1) = w * shape(q);
            for (std::size_t m = 0; m < 4; ++m, ++col)
                for (Eigen::Index i = 0; i < rows; ++i) a(r0 + i, static_cast<Eigen::Index>(col)) = w * hg[m][static_cast<std::size_t>(i)];
        }
        if (!free_cols.empty()) {
            const auto r = lw::nonnegative_least_squares(a, b);
            std::map<std::size_t, double> total;
            for (std::size_t c = 0; c < free_cols.size(); ++c) total[free_cols[c].first] += r.x(static_cast<Eigen::Index>(c));
            for (std::size_t c = 0; c < free_cols.size(); ++c) {
                const auto [q, j] = free_cols[c];
                auto& md = s.models[static_cast<std::size_t>(grp.models[q])];
                // A model the fit leaves unused keeps its shares (nothing constrains them).
                if (total[q] > 0) md.a[j] = r.x(static_cast<Eigen::Index>(c)) / total[q];
            }
        }
    }
    // Final (c, h) and the residuals with the last a.
    f.objective = 0;
    f.residual.clear();
    for (std::size_t k = 0; k < nl; ++k) {
        Eigen::MatrixXd a(rows, static_cast<Eigen::Index>(grp.models.size() + 4));
        for (std::size_t q = 0; q < grp.models.size(); ++q) a.col(static_cast<Eigen::Index>(q)) = shape(q);
        for (std::size_t m = 0; m < 4; ++m)
            for (Eigen::Index i = 0; i < rows; ++i) a(i, static_cast<Eigen::Index>(grp.models.size() + m)) = hg[m][static_cast<std::size_t>(i)];
        const auto r = lw::nonnegative_least_squares(a, lamp[k]);
        for (std::size_t q = 0; q < grp.models.size(); ++q) f.c[k][q] = r.x(static_cast<Eigen::Index>(q));
        for (std::size_t m = 0; m < 4; ++m) f.h[k][m] = r.x(static_cast<Eigen::Index>(grp.models.size() + m));
        const double rel = r.residual_norm / lamp[k].norm();
        f.residual.push_back(rel);
        f.objective += rel * rel;
    }
    return f;
}

struct Outer {
    State* s;
    const Group* grp;
    std::vector<int> params;  // theta indices free in this group
    int evaluations = 0;
};

double outer_objective(unsigned n, const double* x, double*, void* data) {
    auto* o = static_cast<Outer*>(data);
    std::vector<double> th;
    for (const auto& p : o->s->theta) th.push_back(p.value);
    for (unsigned i = 0; i < n; ++i) th[static_cast<std::size_t>(o->params[i])] = x[i];
    ++o->evaluations;
    return fit_linear(*o->s, *o->grp, th, 6).objective;
}

GroupFit fit_group(State& s, const Group& grp) {
    std::vector<int> params;
    for (int q : grp.models) {
        const auto& md = s.models[static_cast<std::size_t>(q)];
        if (md.fixed) continue;
        for (const auto& e : md.emitters) {
            for (int p : {e.position_param, e.width_param})
                if (p >= 0 && std::find(params.begin(), params.end(), p) == params.end()) params.push_back(p);
        }
    }
    Outer o{&s, &grp, params, 0};
    if (!params.empty()) {
        nlopt::opt opt(nlopt::LN_BOBYQA, static_cast<unsigned>(params.size()));
        std::vector<double> x, lo, hi;
        for (int p : params) {
            const auto& pr = s.theta[static_cast<std::size_t>(p)];
            x.push_back(pr.value), lo.push_back(pr.lo), hi.push_back(pr.hi);
        }
        opt.set_lower_bounds(lo);
        opt.set_upper_bounds(hi);
        opt.set_min_objective(outer_objective, &o);
        opt.set_xtol_rel(1e-5);
        opt.set_maxeval(4000);
        double best = 0;
        try {
            opt.optimize(x, best);
        } catch (const std::exception& e) {
            std::cerr << "derive_lamp_phosphors: " << grp.name << ": optimiser stopped: " << e.what() << '\n';
        }
        for (std::size_t i = 0; i < params.size(); ++i) s.theta[static_cast<std::size_t>(params[i])].value = x[i];
    }
    std::vector<double> th;
    for (const auto& p : s.theta) th.push_back(p.value);
    const GroupFit f = fit_linear(s, grp, th, 40);
    std::cout << fmt::format("{}: {} evaluations\n", grp.name, o.evaluations);
    for (std::size_t k = 0; k < grp.lamps.size(); ++k) {
        std::cout << fmt::format("  FL{:<2} residual {:.4f}  Hg", grp.lamps[k], f.residual[k]);
        for (double h : f.h[k]) std::cout << fmt::format(" {:8.3f}", h);
        std::cout << "  c";
        for (std::size_t q = 0; q < grp.models.size(); ++q) std::cout << fmt::format(" {}={:.3g}", s.models[static_cast<std::size_t>(grp.models[q])].key, f.c[k][q]);
        std::cout << '\n';
    }
    if (std::getenv("DERIVE_VERBOSE")) {
        // Residual per 5 nm point, in % of each lamp's peak: where the model misses.
        for (std::size_t k = 0; k < grp.lamps.size(); ++k) {
            const auto t = lw::cie_fl_table(grp.lamps[k]);
            std::cout << fmt::format("  FL{} misfit (% of peak) at 380..780 nm:", grp.lamps[k]);
            const auto nm = table_nm();
            double peak = 0;
            for (double v : t.values) peak = std::max(peak, v);
            for (std::size_t i = 0; i < nm.size(); ++i) {
                double model = 0;
                for (std::size_t q = 0; q < grp.models.size(); ++q) {
                    const auto& md = s.models[static_cast<std::size_t>(grp.models[q])];
                    for (std::size_t j = 0; j < md.emitters.size(); ++j) model += f.c[k][q] * md.a[j] * emitter_column(md.emitters[j], th)[i];
                }
                for (std::size_t m = 0; m < 4; ++m) model += f.h[k][m] * mercury_column(m)[i];
                const double d = 100 * (model - t.values[i]) / peak;
                if (std::abs(d) > 1.0) std::cout << fmt::format(" {}:{:+.1f}", nm[i], d);
            }
            std::cout << '\n';
        }
    }
    for (int p : params) {
        const auto& pr = s.theta[static_cast<std::size_t>(p)];
        std::cout << fmt::format("  {:28} {:8.2f}  (bounds {:g}-{:g}){}\n", pr.name, pr.value, pr.lo, pr.hi,
                                 (std::abs(pr.value - pr.lo) < 1e-3 || std::abs(pr.value - pr.hi) < 1e-3) ? "  AT BOUND" : "");
    }
    return f;
}

}  // namespace

namespace {

int param(State& s, std::string name, double value, double lo, double hi) {
    s.theta.push_back({std::move(name), value, lo, hi});
    return static_cast<int>(s.theta.size()) - 1;
}

Emitter line(double nm, int width, int shift, std::string transition) { return {false, nm, shift, width, 0, std::move(transition)}; }
Emitter band(State& s, const std::string& name, double nm, double lo, double hi, double fwhm, double fwhm_lo, double fwhm_hi,
             std::string transition) {
    const int p = param(s, name + " peak nm", nm, lo, hi);
    const int w = param(s, name + " FWHM nm", fwhm, fwhm_lo, fwhm_hi);
    return {true, nm, p, w, 0, std::move(transition)};
}

int add_model(State& s, Model m) {
    m.a.assign(m.emitters.size(), 1.0 / static_cast<double>(m.emitters.size()));
    s.models.push_back(std::move(m));
    return static_cast<int>(s.models.size()) - 1;
}

// Eu3+ in Y2O3 (C2 site): 5D0 -> 7FJ (J = 0-4) and 5D1 -> 7F1. Positions: from memory (the
// crystal-field components that a 5 nm table can tell apart). One width per manifold.
int yox(State& s) {
    const int w1 = param(s, "Eu3+ 5D1 width", 2.5, 0.8, 6), w0 = param(s, "Eu3+ 7F0,7F1 width", 2.5, 0.8, 6),
              w2 = param(s, "Eu3+ 7F2 width", 2.5, 0.8, 6), w3 = param(s, "Eu3+ 7F3 width", 3, 0.8, 8),
              w4 = param(s, "Eu3+ 7F4 width", 3, 0.8, 10);
    // Each manifold may move by up to 2 nm as a whole from the listed positions (their uncertainty).
    const int s1 = param(s, "Eu3+ 5D1 shift", 0, -2, 2), s0 = param(s, "Eu3+ 7F0,7F1 shift", 0, -2, 2),
              s2 = param(s, "Eu3+ 7F2 shift", 0, -2, 2), s3 = param(s, "Eu3+ 7F3 shift", 0, -2, 2), s4 = param(s, "Eu3+ 7F4 shift", 0, -2, 2);
    Model m{"Y2O3:Eu3+", "Y2O3_Eu.toml", {}, {}, false,
            "Line positions (crystal-field components of Eu3+ on the C2 site of Y2O3, each manifold allowed to move by up to 2 nm in the "
            "fit): from memory."};
    m.emitters = {line(535.0, w1, s1, "5D1-7F1"), line(580.5, w0, s0, "5D0-7F0"), line(587.5, w0, s0, "5D0-7F1"),
                  line(593.0, w0, s0, "5D0-7F1"), line(599.5, w0, s0, "5D0-7F1"), line(611.0, w2, s2, "5D0-7F2, main line"),
                  line(624.5, w2, s2, "5D0-7F2"), line(631.0, w2, s2, "5D0-7F2"), line(648.0, w3, s3, "5D0-7F3"),
                  line(653.0, w3, s3, "5D0-7F3"), line(688.0, w4, s4, "5D0-7F4"), line(694.0, w4, s4, "5D0-7F4"),
                  line(707.5, w4, s4, "5D0-7F4"), line(710.5, w4, s4, "5D0-7F4")};
    return add_model(s, std::move(m));
}

// Tb3+ (LaPO4:Ce,Tb and the other Tb3+ greens): 5D4 -> 7FJ (J = 6-0) and the weak 5D3 lines.
int terbium(State& s) {
    const int w3 = param(s, "Tb3+ 5D3 width", 3, 1, 8), w6 = param(s, "Tb3+ 7F6 width", 4, 1, 10), w5 = param(s, "Tb3+ 7F5 width", 4, 1, 10),
              w4 = param(s, "Tb3+ 7F4 width", 4, 1, 10), wr = param(s, "Tb3+ 7F3-7F0 width", 4, 1, 10);
    const int s3 = param(s, "Tb3+ 5D3 shift", 0, -2, 2), s6 = param(s, "Tb3+ 7F6 shift", 0, -2, 2), s5 = param(s, "Tb3+ 7F5 shift", 0, -2, 2),
              s4 = param(s, "Tb3+ 7F4 shift", 0, -2, 2), sr = param(s, "Tb3+ 7F3-7F0 shift", 0, -2, 2);
    Model m{"LaPO4:Ce3+,Tb3+", "LaPO4_Ce_Tb.toml", {}, {}, false,
            "Line positions (Tb3+ 5D4-7FJ and 5D3-7FJ manifolds and their main components, each manifold allowed to move by up to 2 nm "
            "in the fit): from memory."};
    m.emitters = {line(415.0, w3, s3, "5D3-7F5"), line(458.0, w3, s3, "5D3-7F3"), line(485.5, w6, s6, "5D4-7F6"),
                  line(490.5, w6, s6, "5D4-7F6"), line(542.5, w5, s5, "5D4-7F5, strongest"), line(547.0, w5, s5, "5D4-7F5"),
                  line(583.0, w4, s4, "5D4-7F4"), line(588.0, w4, s4, "5D4-7F4"), line(615.0, wr, sr, "5D4-7F3"),
                  line(621.0, wr, sr, "5D4-7F3"), line(647.5, wr, sr, "5D4-7F2"), line(668.0, wr, sr, "5D4-7F1"),
                  line(679.5, wr, sr, "5D4-7F0")};
    return add_model(s, std::move(m));
}

int one_band(State& s, const std::string& key, const std::string& file, double nm, double lo, double hi, double fwhm, double flo,
             double fhi, const std::string& transition, const std::string& note) {
    Model m{key, file, {band(s, key, nm, lo, hi, fwhm, flo, fhi, transition)}, {}, false, note};
    return add_model(s, std::move(m));
}

// Emitter with the values found for another model's emitter (held fixed).
Emitter frozen(const Emitter& e, const std::vector<Param>& th) {
    std::vector<double> v;
    for (const auto& p : th) v.push_back(p.value);
    Emitter f = e;
    f.nm = position_of(e, v);
    f.fixed_fwhm = width_of(e, v);
    f.position_param = f.width_param = -1;
    return f;
}

double visible_power_per_photon(const Model& m, const std::vector<double>& th) {
    double p = 0;
    for (std::size_t j = 0; j < m.emitters.size(); ++j) {
        const lw::Spectrum n = lw::emission_photons(single(m.emitters[j], th));
        for (int nm = 380; nm <= 780; ++nm) p += m.a[j] * n.values[static_cast<std::size_t>(nm - n.first_nm)] * 555.0 / nm;
    }
    return p;
}

std::vector<double> values(const State& s) {
    std::vector<double> v;
    for (const auto& p : s.theta) v.push_back(p.value);
    return v;
}

std::string fmt_list(const std::vector<double>& v, int digits) {
    std::string out;
    for (double x : v) out += (out.empty() ? "" : ", ") + fmt::format("{:.{}f}", x, digits);
    return out;
}

struct Derivation {
    std::string group_text;  // "FL10-FL12"
    std::vector<double> residuals;
};

std::string emission_block(const Model& m, const std::vector<double>& th, const std::string& source) {
    std::string out = "# BEGIN derived emission: tools/derive_lamp_phosphors.cpp rewrites this block\n[emission]\n";
    const bool lines = !m.emitters.front().band;
    out += lines ? "model = \"lines\"\nlines = [\n" : "model = \"bands\"\nbands = [\n";
    for (std::size_t j = 0; j < m.emitters.size(); ++j) {
        const auto& e = m.emitters[j];
        // A component the fit gave no strength stays visible as a comment (a zero weight is not a
        // valid file entry: the phosphor simply does not show that transition in these lamps).
        if (m.a[j] < (lines ? 0.5e-5 : 0.5e-4)) {
            out += fmt::format("  # {} near {:.1f} nm: left out, the fit gave it no strength\n", e.transition, position_of(e, th));
            continue;
        }
        if (lines)
            out += fmt::format("  {{ nm = {:.1f}, weight = {:.5f}, fwhm_nm = {:.2f} }},   # {}\n", position_of(e, th), m.a[j], width_of(e, th), e.transition);
        else
            out += fmt::format("  {{ peak_nm = {:.1f}, fwhm_nm = {:.1f}, weight = {:.4f} }},   # {}\n", position_of(e, th), width_of(e, th), m.a[j],
                               e.transition);
    }
    out += "]\nsource = \"" + source + "\"\n# END derived emission\n";
    return out;
}

// A phosphor file's text and the place of its "# BEGIN derived emission" ... "# END derived
// emission" block; throws when the file cannot be read or has no such block.
struct BlockedFile {
    std::string text;
    std::size_t begin = 0, end = 0;  // of the BEGIN and END markers
};

BlockedFile read_block(const std::string& path) {
    std::ifstream in(path);
    if (!in) throw std::runtime_error(path + ": cannot be read");
    std::stringstream ss;
    ss << in.rdbuf();
    BlockedFile f{ss.str()};
    f.begin = f.text.find("# BEGIN derived emission");
    f.end = f.text.find("# END derived emission");
    if (f.begin == std::string::npos || f.end == std::string::npos || f.end < f.begin)
        throw std::runtime_error(path + ": no '# BEGIN derived emission' ... '# END derived emission' block");
    return f;
}

void require_block(const std::string& path) { (void)read_block(path); }

void replace_block(const std::string& path, const std::string& block) {
    const BlockedFile f = read_block(path);
    const std::string& text = f.text;
    const auto b = f.begin, e = f.end;
    const auto e_end = text.find('\n', e);
    const std::string out = text.substr(0, b) + block + text.substr(e_end == std::string::npos ? text.size() : e_end + 1);
    const std::string tmp = path + ".tmp";
    {
        std::ofstream o(tmp);
        o << out;
        if (!o.flush()) throw std::runtime_error(tmp + ": cannot be written");
    }
    if (std::rename(tmp.c_str(), path.c_str()) != 0) throw std::runtime_error(path + ": cannot be replaced");
}

const char* kMethod =
    "joint fit of the lamps' 5 nm tables (5 nm triangular bandpass modelled) with line or band positions fixed by the activator or "
    "bounded, widths by BOBYQA (NLopt), line strengths and each lamp's phosphor and mercury amounts by alternating non-negative "
    "least squares (Lawson-Hanson)";

}  // namespace

int main(int argc, char** argv) {
    if (argc < 2) {
        std::cerr << "usage: derive_lamp_phosphors DATA_DIR [--write]\n";
        return 2;
    }
    const std::string data = argv[1];
    const bool write = argc > 2 && std::string(argv[2]) == "--write";
    try {
        State s;
        // Group 1: halophosphate lamps.
        const int sb = one_band(s, "Ca5(PO4)3F:Sb3+", "Ca5_PO4_3F_Sb.toml", 482, 465, 500, 150, 90, 230, "Sb3+ 3P1-1S0",
                                "Sb3+ band near 480 nm: abstract on halophosphate luminescence (Sb/Mn energy transfer); bounds 465-500 nm, "
                                "FWHM 90-230 nm: model assumption, no source.");
        const int mn_f = one_band(s, "Mn2+ (short component)", "", 578, 555, 590, 72, 50, 100, "Mn2+ 4T1-6A1",
                                  "Mn2+ band 555 nm (all-F) to 580 nm (all-Cl): abstract on halophosphate luminescence; bounds 555-590 nm.");
        const int mn_cl = one_band(s, "Mn2+ (long component)", "", 590, 578, 605, 72, 50, 100, "Mn2+ 4T1-6A1",
                                   "Mn2+ band near 580 nm in the Cl-rich host: abstract on halophosphate luminescence; bounds 578-605 nm.");
        const Group halo{"halophosphate FL1-FL6", {1, 2, 3, 4, 5, 6}, {sb, mn_f, mn_cl}};
        // With --write, every file to be rewritten must have its block: fail before the long fits.
        auto check_files = [&]() {
            if (!write) return;
            for (const char* f : {"Ca5_PO4_3_F_Cl_Sb_Mn_cool.toml", "Ca5_PO4_3_F_Cl_Sb_Mn_warm.toml", "CeMgAl11O19_Tb.toml", "GdMgB5O10_Ce_Tb.toml"})
                require_block(data + "/phosphors/" + f);
            for (const auto& m : s.models)
                if (!m.file.empty()) require_block(data + "/phosphors/" + m.file);
        };
        check_files();
        const GroupFit f_halo = fit_group(s, halo);
        for (int q : halo.models) s.models[static_cast<std::size_t>(q)].fixed = true;

        // Group 2: tri-band lamps. Many tri-band tubes put a halophosphate base coat under the rare-earth
        // layer (common practice, no source): the halophosphate bands of group 1 are offered, held fixed.
        const int y = yox(s), t = terbium(s);
        const int bam = one_band(s, "BaMgAl10O17:Eu2+", "BaMgAl10O17_Eu.toml", 451, 440, 462, 52, 35, 70, "Eu2+ 4f65d-4f7",
                                 "Band peak bounded to 440-462 nm and FWHM to 35-70 nm around the from-memory 450 nm / 50 nm.");
        const Group tri{"tri-band FL10-FL12", {10, 11, 12}, {y, t, bam, sb, mn_f, mn_cl}};
        check_files();
        const GroupFit f_tri = fit_group(s, tri);
        for (int q : {y, t, bam}) s.models[static_cast<std::size_t>(q)].fixed = true;

        // Group 3: broadband (de luxe, high-CRI) lamps; the phosphors above held fixed.
        const auto th_now = s.theta;
        const int sp = one_band(s, "Sr2P2O7:Eu2+", "Sr2P2O7_Eu.toml", 420, 408, 430, 32, 20, 50, "Eu2+ 4f65d-4f7",
                                "Band near 420 nm, FWHM about 30 nm: from memory; bounds 408-430 nm, 20-50 nm.");
        const int cw = one_band(s, "CaWO4", "CaWO4.toml", 425, 410, 440, 100, 70, 130, "WO4 2- charge transfer",
                                "Broad band near 420-430 nm, FWHM about 100 nm: from memory; bounds 410-440 nm, 70-130 nm.");
        const int mw = one_band(s, "MgWO4", "MgWO4.toml", 480, 465, 495, 130, 100, 165, "WO6 6- charge transfer",
                                "Broad band near 480 nm, FWHM about 130 nm: from memory; bounds 465-495 nm, 100-165 nm.");
        const int sa = one_band(s, "Sr4Al14O25:Eu2+", "Sr4Al14O25_Eu.toml", 492, 484, 500, 65, 50, 80, "Eu2+ 4f65d-4f7",
                                "Band near 490 nm, FWHM about 65 nm: from memory; bounds 484-500 nm, 50-80 nm.");
        Model bm{"BaMgAl10O17:Eu2+,Mn2+", "BaMgAl10O17_Eu_Mn.toml",
                 {frozen(s.models[static_cast<std::size_t>(bam)].emitters[0], th_now),
                  band(s, "BAM Mn2+", 515, 508, 522, 28, 20, 40, "Mn2+ 4T1-6A1")},
                 {}, false,
                 "Eu2+ band: as derived for BaMgAl10O17:Eu2+ from FL10-FL12. Mn2+ band near 515 nm, FWHM about 30 nm: from memory; bounds "
                 "508-522 nm, 20-40 nm."};
        const int bmn = add_model(s, std::move(bm));
        const int cbm = one_band(s, "(Ce,Gd)MgB5O10:Mn2+", "Ce_Gd_MgB5O10_Mn.toml", 628, 612, 642, 80, 55, 105, "Mn2+ 4T1-6A1",
                                 "Mn2+ band near 620-630 nm, FWHM about 80 nm: from memory; bounds 612-642 nm, 55-105 nm.");
        const int zs = one_band(s, "Zn2SiO4:Mn2+", "Zn2SiO4_Mn.toml", 525, 518, 532, 40, 30, 52, "Mn2+ 4T1-6A1",
                                "Band near 525 nm, FWHM about 40 nm: from memory; bounds 518-532 nm, 30-52 nm.");
        const int sn = one_band(s, "(Sr,Mg)3(PO4)2:Sn2+", "Sr_Mg_3_PO4_2_Sn.toml", 626, 605, 640, 140, 100, 165, "Sn2+ 3P1-1S0",
                                "Broad band near 626 nm, FWHM about 140 nm: from memory; bounds 605-640 nm, 100-165 nm.");
        const int sc = one_band(s, "Sr5(PO4)3Cl:Eu2+", "Sr5_PO4_3Cl_Eu.toml", 447, 442, 453, 35, 25, 50, "Eu2+ 4f65d-4f7",
                                "447 nm: from memory; 440-450 nm, 25-65 nm FWHM: patent literature on blended halophosphate lamps; bounds "
                                "442-453 nm, 25-50 nm.");
        const Group broad{"broadband FL7-FL9", {7, 8, 9}, {y, t, bam, sb, mn_f, mn_cl, sp, cw, mw, sa, bmn, cbm, zs, sn, sc}};
        check_files();
        const GroupFit f_broad = fit_group(s, broad);

        const auto th = values(s);
        auto residual_text = [](const Group& g, const GroupFit& f) {
            std::string out;
            for (std::size_t k = 0; k < g.lamps.size(); ++k) out += fmt::format("{}FL{} {:.3f}", out.empty() ? "" : ", ", g.lamps[k], f.residual[k]);
            return out;
        };
        auto used_in = [&](const Group& g, const GroupFit& f, int model) {
            std::string out;
            const auto q = static_cast<std::size_t>(std::find(g.models.begin(), g.models.end(), model) - g.models.begin());
            for (std::size_t k = 0; k < g.lamps.size(); ++k)
                if (f.c[k][q] > 1e-9) out += fmt::format("{}FL{}", out.empty() ? "" : ", ", g.lamps[k]);
            return out;
        };

        // Mercury lines: mean over each group's lamps of the fitted line powers (relative to 435.8 nm)
        // and of their share of the lamp's visible power.
        std::string hg = "# Visible mercury lines of low-pressure fluorescent lamps. Derived from CIE 15:2004 Table T.6 (FL1-FL12) by\n"
                         "# tools/derive_lamp_phosphors.cpp: each lamp's line powers from the joint fit described there; the values are\n"
                         "# the means over each group's lamps. The 577.0/579.1 nm pair is one 5 nm value in the table and is split 1:1\n"
                         "# (from memory). The 365 nm line lies outside the tables (380-780 nm) and is not given here.\n"
                         "# The line ratios belong to the discharge, not the coating: the library uses the halophosphate group's\n"
                         "# (FL1-FL6, no phosphor line near a mercury line); in the tri-band fit the Tb3+ 5D4-7F5 lines overlap 546.1 nm\n"
                         "# and take most of it, so that group's 546.1 nm ratio is not a measurement of the line.\n";
        auto hg_group = [&](const std::string& key, const Group& g, const GroupFit& f) {
            std::array<double, 4> ratio{};
            double fraction = 0;
            for (std::size_t k = 0; k < g.lamps.size(); ++k) {
                double phos = 0, lines = 0;
                for (std::size_t q = 0; q < g.models.size(); ++q)
                    phos += f.c[k][q] * visible_power_per_photon(s.models[static_cast<std::size_t>(g.models[q])], th);
                for (std::size_t m = 0; m < 4; ++m) lines += f.h[k][m], ratio[m] += f.h[k][m] / f.h[k][1] / static_cast<double>(g.lamps.size());
                fraction += lines / (lines + phos) / static_cast<double>(g.lamps.size());
            }
            hg += fmt::format("\n[{}]   # {}: residuals {}\nvisible_fraction = {:.4f}\nrelative_power = [{}]   # 404.7, 435.8, 546.1, 577.0+579.1 nm\n",
                              key, g.name, residual_text(g, f), fraction, fmt_list({ratio[0], ratio[1], ratio[2], ratio[3]}, 3));
        };
        hg_group("halophosphate", halo, f_halo);
        hg_group("tri-band", tri, f_tri);
        hg_group("broadband", broad, f_broad);
        std::cout << '\n' << hg;

        std::vector<std::pair<std::string, std::string>> blocks;  // file, block
        auto source_for = [&](const Model& m, const Group& g, const GroupFit& f, int q) {
            const std::string used = used_in(g, f, q);
            std::string src = m.memory_note + " Line or band strengths and widths: derived from CIE 15:2004 Table T.6 " + g.name.substr(g.name.find(' ') + 1) +
                              " by tools/derive_lamp_phosphors.cpp (" + kMethod + "); relative residuals " + residual_text(g, f) + ".";
            if (used.empty()) src += " The fit did not use this phosphor: its values are the starting (from-memory) ones, not derived.";
            else src += " Used by the fit in " + used + ".";
            return src;
        };
        std::vector<int> written;  // each phosphor's block comes from the group that derived it
        for (const auto& [g, f] : {std::pair{&halo, &f_halo}, std::pair{&tri, &f_tri}, std::pair{&broad, &f_broad}})
            for (int q : g->models) {
                const auto& m = s.models[static_cast<std::size_t>(q)];
                if (m.file.empty() || std::find(written.begin(), written.end(), q) != written.end()) continue;
                written.push_back(q);
                blocks.emplace_back(m.file, emission_block(m, th, source_for(m, *g, *f, q)));
                if (q == t)
                    for (const char* other : {"CeMgAl11O19_Tb.toml", "GdMgB5O10_Ce_Tb.toml"})
                        blocks.emplace_back(other, emission_block(m, th,
                                                                  source_for(m, *g, *f, q) +
                                                                      " The Tb3+ lines of LaPO4:Ce,Tb used for this host too: the 4f-4f lines move "
                                                                      "little between hosts (from memory)."));
            }
        // The two halophosphates: the Sb3+ band with the two components of the (asymmetric) Mn2+ band in
        // FL2's proportions (cool white) and in FL4's (warm white), from the group fit.
        for (const auto& [file, lamp, label] : {std::tuple{"Ca5_PO4_3_F_Cl_Sb_Mn_cool.toml", 2, "cool white, FL2"},
                                                std::tuple{"Ca5_PO4_3_F_Cl_Sb_Mn_warm.toml", 4, "warm white, FL4"}}) {
            const auto k = static_cast<std::size_t>(std::find(halo.lamps.begin(), halo.lamps.end(), lamp) - halo.lamps.begin());
            const double total = f_halo.c[k][0] + f_halo.c[k][1] + f_halo.c[k][2];
            Model m{"", "", {}, {}, true, ""};
            for (int q : {sb, mn_f, mn_cl}) m.emitters.push_back(frozen(s.models[static_cast<std::size_t>(q)].emitters[0], s.theta));
            m.a = {f_halo.c[k][0] / total, f_halo.c[k][1] / total, f_halo.c[k][2] / total};
            std::cout << fmt::format("{}: Sb : Mn(short) : Mn(long) photon shares {:.4f} : {:.4f} : {:.4f}\n", label, m.a[0], m.a[1], m.a[2]);
            blocks.emplace_back(file, emission_block(m, th,
                                                     s.models[static_cast<std::size_t>(sb)].memory_note +
                                                         " The Mn2+ band is asymmetric: it is modelled as two Gaussian components (a shorter- and a "
                                                         "longer-wavelength one, bounds 555-590 and 578-605 nm). Band positions and widths: derived from "
                                                         "CIE 15:2004 Table T.6 FL1-FL6 by tools/derive_lamp_phosphors.cpp (" + kMethod +
                                                         "); relative residuals " + residual_text(halo, f_halo) + ". Band shares: those of " + label +
                                                         " in that fit."));
        }
        if (write) {
            for (const auto& [file, block] : blocks) replace_block(data + "/phosphors/" + file, block);
            const std::string hg_path = data + "/mercury/low_pressure_lines.toml";
            std::ofstream o(hg_path + ".tmp");
            o << hg;
            if (!o.flush() || std::rename((hg_path + ".tmp").c_str(), hg_path.c_str()) != 0) throw std::runtime_error(hg_path + ": cannot be written");
            std::cout << fmt::format("wrote {} emission blocks and {}\n", blocks.size(), hg_path);
        }
    } catch (const std::exception& e) {
        std::cerr << "derive_lamp_phosphors: " << e.what() << '\n';
        return 1;
    }
    return 0;
}
