#include "lampwright/led/layer_transfer.hpp"

#include "lampwright/led/layer_optics.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/phosphor/phosphor.hpp"

#include <Eigen/Dense>

#include <algorithm>
#include <limits>
#include <optional>
#include <cmath>
#include <numbers>
#include <random>

namespace lampwright {

namespace {

double grid_nm(std::size_t k) { return kEmissionFirstNm + static_cast<double>(k); }

void check_medium(const LayerMedium& m) {
    const std::size_t n = m.pump.size();
    if (n == 0 || m.scattering.size() != n) throw Error("layer medium: pump and scattering must share the grid");
    for (const auto& c : m.components)
        if (c.absorption.size() != n || c.emission.size() != n) throw Error("layer medium: every phosphor must share the grid");
    if (!(m.thickness_cm >= 0) || !(m.binder_index >= 1) || !(m.outside_index >= 1) || !(m.asymmetry > -1 && m.asymmetry < 1) ||
        !(m.reflector_reflectance >= 0 && m.reflector_reflectance <= 1) || !(m.chip_area_fraction >= 0 && m.chip_area_fraction <= 1) ||
        !(m.chip_reflectance >= 0 && m.chip_reflectance <= 1) || !(m.dome_index >= 1))
        throw Error("layer medium: thickness >= 0, indices >= 1, -1 < g < 1, reflectances and the chip's share in [0, 1] expected");
}

}  // namespace

double bottom_reflectance(const LayerMedium& m) {
    return m.chip_area_fraction * m.chip_reflectance + (1 - m.chip_area_fraction) * m.reflector_reflectance;
}

double chip_share_of_bottom_loss(const LayerMedium& m) {
    const double chip = m.chip_area_fraction * (1 - m.chip_reflectance);
    const double all = 1 - bottom_reflectance(m);
    return all > 0 ? chip / all : 0.0;
}

double top_diffuse_reflectance(const LayerMedium& m) {
    return m.dome ? diffuse_dome_reflectance(m.binder_index, m.dome_index, m.outside_index) : diffuse_interface_reflectance(m.binder_index, m.outside_index);
}

double top_normal_reflectance(const LayerMedium& m) {
    return m.dome ? dome_reflectance(1.0, m.binder_index, m.dome_index, m.outside_index) : fresnel_reflectance(1.0, m.binder_index, m.outside_index);
}

double TransferResult::leaked_photons() const {
    double s = 0;
    for (double v : leaked) s += v;
    return s;
}

TransferResult transfer_two_flux(const LayerMedium& med, int generations) {
    check_medium(med);
    const std::size_t grid = med.pump.size(), nc = med.components.size();
    const std::size_t ns = static_cast<std::size_t>(med.sublayers), nn = nc * ns;
    TransferResult r;
    r.leaked.assign(grid, 0.0);
    r.converted.assign(grid, 0.0);
    r.components.resize(nc);

    TwoFluxLayer base;
    base.asymmetry = med.asymmetry;
    base.thickness_cm = med.thickness_cm;
    base.top_reflectance = top_diffuse_reflectance(med);
    base.top_normal_reflectance = top_normal_reflectance(med);
    base.bottom_reflectance = bottom_reflectance(med);
    base.sublayers = med.sublayers;

    // Per wavelength: the response to light emitted in each sublayer (escape, package, absorption
    // in each sublayer), folded at once into the cascade matrices.
    const auto idx = [ns](std::size_t i, std::size_t m) { return static_cast<Eigen::Index>(i * ns + m); };
    Eigen::MatrixXd M = Eigen::MatrixXd::Zero(static_cast<Eigen::Index>(nn), static_cast<Eigen::Index>(nn));
    Eigen::MatrixXd Me = M;  // energy of what M counts (photons / l)
    Eigen::VectorXd pump_absorbed = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(nn));
    std::vector<double> pump_energy(nc, 0.0);
    struct Exit {
        std::size_t k;
        std::vector<double> escape, package;  // per source sublayer
    };
    std::vector<Exit> exits;
    std::vector<double> share(nc);
    std::vector<double> mu_a(grid, 0.0);
    for (const auto& c : med.components)
        for (std::size_t k = 0; k < grid; ++k) mu_a[k] += c.absorption[k];
    const auto slab_at = [&](std::size_t k) {
        TwoFluxLayer l = base;
        l.absorption_per_cm = mu_a[k];
        l.scattering_per_cm = med.scattering[k];
        return TwoFluxSlab(l);
    };
    // The response to light emitted in each sublayer (escape, package, absorption in each sublayer),
    // solved every kNodeStep nm and linearly interpolated between (the optics vary slowly with the
    // wavelength; a weighted mean of responses keeps their balance exactly); solved at the
    // wavelength itself where the absorption vanishes there or at a node.
    struct Node {
        std::vector<double> escape, package, absorbed;  // absorbed[m * ns + m2]: from sublayer m, in m2
    };
    constexpr std::size_t kNodeStep = 4;
    constexpr double kNegligible = 1e-14;
    std::vector<std::optional<Node>> nodes(grid);
    const auto node = [&](std::size_t k) -> const Node& {
        if (!nodes[k]) {
            const TwoFluxSlab slab = slab_at(k);
            Node n{std::vector<double>(ns), std::vector<double>(ns), std::vector<double>(ns * ns)};
            for (std::size_t m = 0; m < ns; ++m) {
                const SlabResponse e = slab.sublayer_source(static_cast<int>(m));
                n.escape[m] = e.escaped;
                n.package[m] = e.package;
                for (std::size_t m2 = 0; m2 < ns; ++m2) n.absorbed[m * ns + m2] = e.absorbed[m2];
            }
            nodes[k] = std::move(n);
        }
        return *nodes[k];
    };
    // The nodes (and weights) a wavelength's response is interpolated from.
    struct Weights {
        std::size_t k0, k1;
        double w0, w1;
    };
    const auto weights = [&](std::size_t k) -> Weights {
        const std::size_t k0 = k - k % kNodeStep, k1 = std::min(k0 + kNodeStep, grid - 1);
        if (k == k0 || k1 <= k || !(mu_a[k] > 0 && mu_a[k0] > 0 && mu_a[k1] > 0)) return {k, k, 1.0, 0.0};
        const double w = static_cast<double>(k - k0) / static_cast<double>(k1 - k0);
        return {k0, k1, 1 - w, w};
    };
    // Re-absorption coefficients per node: coef[k][i][j] = sum over the wavelengths interpolated
    // from node k of weight x emission_i x share_j (and the same over l for the energy), so that the
    // sublayer-to-sublayer matrices are folded in once per node, not once per nm.
    std::vector<std::vector<double>> coef(grid), coef_e(grid);
    const auto add_coef = [&](std::size_t node_k, double w, std::size_t i, std::size_t j, double v, double inv_nm) {
        auto& c = coef[node_k];
        auto& ce = coef_e[node_k];
        if (c.empty()) c.assign(nc * nc, 0.0), ce.assign(nc * nc, 0.0);
        c[i * nc + j] += w * v;
        ce[i * nc + j] += w * v * inv_nm;
    };
    for (std::size_t k = 0; k < grid; ++k) {
        // Pump and emission below 1e-14 of their photons per nm (the far tails of Gaussian bands)
        // are left out of the transport: at most 1e-11 of the photons, below the 1e-9 balance.
        bool emits = false;
        for (const auto& c : med.components) emits = emits || c.emission[k] > kNegligible;
        const bool pumped = med.pump[k] > kNegligible;
        if (!pumped && !emits) continue;
        for (std::size_t i = 0; i < nc; ++i) share[i] = mu_a[k] > 0 ? med.components[i].absorption[k] / mu_a[k] : 0.0;
        const double inv_nm = 1 / grid_nm(k);
        if (pumped) {
            const SlabResponse p = slab_at(k).collimated_beam();
            const double w = med.pump[k];
            r.leaked[k] += w * p.escaped;
            r.package_photons += w * p.package;
            r.package_energy += w * p.package * inv_nm;
            for (std::size_t m = 0; m < ns; ++m)
                for (std::size_t j = 0; j < nc; ++j) {
                    const double taken = w * p.absorbed[m] * share[j];
                    pump_absorbed(idx(j, m)) += taken;
                    pump_energy[j] += taken * inv_nm;
                }
        }
        if (!emits) continue;
        const Weights wt = weights(k);
        const Node &n0 = node(wt.k0), &n1 = node(wt.k1);
        Exit e{k, std::vector<double>(ns), std::vector<double>(ns)};
        for (std::size_t m = 0; m < ns; ++m) {
            e.escape[m] = wt.w0 * n0.escape[m] + wt.w1 * n1.escape[m];
            e.package[m] = wt.w0 * n0.package[m] + wt.w1 * n1.package[m];
        }
        exits.push_back(std::move(e));
        if (!(mu_a[k] > 0)) continue;
        for (std::size_t i = 0; i < nc; ++i) {
            const double em = med.components[i].emission[k];
            if (em <= 0) continue;
            for (std::size_t j = 0; j < nc; ++j) {
                if (share[j] <= 0) continue;
                add_coef(wt.k0, wt.w0, i, j, em * share[j], inv_nm);
                if (wt.w1 > 0) add_coef(wt.k1, wt.w1, i, j, em * share[j], inv_nm);
            }
        }
    }
    for (std::size_t k = 0; k < grid; ++k) {
        if (coef[k].empty()) continue;
        const Node& n = node(k);
        for (std::size_t i = 0; i < nc; ++i)
            for (std::size_t j = 0; j < nc; ++j) {
                const double c = coef[k][i * nc + j], ce = coef_e[k][i * nc + j];
                if (c == 0 && ce == 0) continue;
                for (std::size_t m = 0; m < ns; ++m)
                    for (std::size_t m2 = 0; m2 < ns; ++m2) {
                        const double a = n.absorbed[m * ns + m2];
                        M(idx(i, m), idx(j, m2)) += c * a;
                        Me(idx(i, m), idx(j, m2)) += ce * a;
                    }
            }
    }

    // Cascade over all generations: N = N_pump + M^T Q N.
    Eigen::VectorXd q(static_cast<Eigen::Index>(nn));
    for (std::size_t i = 0; i < nc; ++i)
        for (std::size_t m = 0; m < ns; ++m) q(idx(i, m)) = med.components[i].quantum_efficiency;
    const Eigen::MatrixXd MtQ = M.transpose() * q.asDiagonal();
    Eigen::VectorXd absorbed;
    if (generations <= 0) {
        absorbed = (Eigen::MatrixXd::Identity(MtQ.rows(), MtQ.cols()) - MtQ).partialPivLu().solve(pump_absorbed);
    } else {
        Eigen::VectorXd g = pump_absorbed;
        absorbed = g;
        for (int n = 1; n < generations; ++n) {
            g = MtQ * g;
            absorbed += g;
        }
    }
    const Eigen::VectorXd emitted = q.cwiseProduct(absorbed);
    const Eigen::VectorXd reabsorbed_energy = Me.transpose() * emitted;  // per (j, m2)

    for (std::size_t i = 0; i < nc; ++i) {
        auto& c = r.components[i];
        c.absorbed_energy = pump_energy[i];
        for (std::size_t m = 0; m < ns; ++m) {
            c.pump_absorbed += pump_absorbed(idx(i, m));
            c.absorbed += absorbed(idx(i, m));
            c.emitted += emitted(idx(i, m));
            c.absorbed_energy += reabsorbed_energy(idx(i, m));
        }
        const auto& em = med.components[i].emission;
        for (std::size_t k = 0; k < grid; ++k) c.emitted_energy += c.emitted * em[k] / grid_nm(k);
    }
    for (const auto& e : exits) {
        const double inv_nm = 1 / grid_nm(e.k);
        for (std::size_t i = 0; i < nc; ++i) {
            const double em = med.components[i].emission[e.k];
            if (em <= 0) continue;
            for (std::size_t m = 0; m < ns; ++m) {
                const double n = emitted(idx(i, m)) * em;
                r.converted[e.k] += n * e.escape[m];
                r.components[i].escaping += n * e.escape[m];
                r.components[i].escaping_energy += n * e.escape[m] * inv_nm;
                r.package_photons += n * e.package[m];
                r.package_energy += n * e.package[m] * inv_nm;
            }
        }
    }
    // The bottom is diffuse and uniform: the chip takes its area's share of every loss there.
    const double chip = chip_share_of_bottom_loss(med);
    r.chip_photons = chip * r.package_photons;
    r.chip_energy = chip * r.package_energy;
    return r;
}

namespace {

// Sampling from a table on the grid by its cumulative sum.
struct Sampler {
    std::vector<double> cdf;
    explicit Sampler(const std::vector<double>& w) : cdf(w.size()) {
        double s = 0;
        for (std::size_t k = 0; k < w.size(); ++k) cdf[k] = s += std::max(0.0, w[k]);
    }
    bool empty() const { return cdf.empty() || !(cdf.back() > 0); }
    std::size_t operator()(double u) const {
        const auto it = std::upper_bound(cdf.begin(), cdf.end(), u * cdf.back());
        return std::min(static_cast<std::size_t>(it - cdf.begin()), cdf.size() - 1);
    }
};

}  // namespace

TransferResult transfer_monte_carlo(const LayerMedium& med, std::int64_t photons, std::uint64_t seed) {
    check_medium(med);
    if (photons < 1) throw Error("the Monte Carlo needs at least one photon");
    const std::size_t grid = med.pump.size(), nc = med.components.size();
    TransferResult r;
    r.leaked.assign(grid, 0.0);
    r.converted.assign(grid, 0.0);
    r.components.resize(nc);
    std::vector<double> mu_a(grid, 0.0);
    for (const auto& c : med.components)
        for (std::size_t k = 0; k < grid; ++k) mu_a[k] += c.absorption[k];
    const Sampler pump(med.pump);
    if (pump.empty()) throw Error("the Monte Carlo needs a pump spectrum");
    std::vector<Sampler> emission;
    for (const auto& c : med.components) emission.emplace_back(c.emission);

    // 53 random bits per draw, the same on every platform for the same seed.
    std::mt19937_64 rng(seed);
    const auto uniform = [&rng] { return static_cast<double>(rng() >> 11) * 0x1.0p-53; };
    const double t = med.thickness_cm, g = med.asymmetry;
    const double n1 = med.binder_index, n2 = med.dome ? med.dome_index : med.outside_index;
    // The dome surface's normal-incidence reflectance (0 for a flat top).
    const double r_dome = med.dome ? fresnel_reflectance(1.0, med.dome_index, med.outside_index) : 0.0;
    // The bottom, one draw: reflected (chip or reflector) below R_b, absorbed by the chip in
    // [R_b, R_b + f (1 - R_c)), by the reflector above (with f = 0 exactly the draws before).
    const double r_bottom = bottom_reflectance(med);
    const double chip_absorbs = r_bottom + med.chip_area_fraction * (1 - med.chip_reflectance);
    const double pi2 = 2 * std::numbers::pi;
    // Henyey-Greenstein: cos theta = (1 + g^2 - ((1 - g^2) / (1 - g + 2 g u))^2) / (2 g).
    const auto hg_cos = [g](double u) {
        if (std::abs(g) < 1e-9) return 2 * u - 1;
        const double f = (1 - g * g) / (1 - g + 2 * g * u);
        return std::clamp((1 + g * g - f * f) / (2 * g), -1.0, 1.0);
    };

    for (std::int64_t p = 0; p < photons; ++p) {
        std::size_t k = pump(uniform());
        bool is_pump = true;
        std::size_t owner = 0;  // the phosphor that emitted it (when not pump)
        double z = 0, mu = 1;   // collimated, entering at the bottom
        for (;;) {
            const double mt = mu_a[k] + med.scattering[k];
            const double s = mt > 0 ? -std::log(1 - uniform()) / mt : std::numeric_limits<double>::infinity();
            const double z_next = z + s * mu;
            if (z_next >= t && mu > 0) {
                if (uniform() < fresnel_reflectance(mu, n1, n2)) {
                    z = t;
                    mu = -mu;
                    continue;
                }
                if (r_dome > 0) {
                    // In the dome: to its surface at normal incidence; R0 comes back along the ray
                    // and meets the interface at the same angle, from the dome side.
                    const double mu_d = std::sqrt(std::max(0.0, 1 - (n1 / n2) * (n1 / n2) * (1 - mu * mu)));
                    bool back = false;
                    while (uniform() < r_dome) {
                        if (uniform() < fresnel_reflectance(mu_d, n2, n1)) continue;  // up to the dome surface again
                        back = true;
                        break;
                    }
                    if (back) {
                        z = t;
                        mu = -mu;
                        continue;
                    }
                }
                if (is_pump) {
                    r.leaked[k] += 1;
                } else {
                    r.converted[k] += 1;
                    r.components[owner].escaping += 1;
                    r.components[owner].escaping_energy += 1 / grid_nm(k);
                }
                break;
            }
            if (z_next <= 0 && mu < 0) {
                const double u = uniform();
                if (u < r_bottom) {
                    z = 0;
                    mu = std::sqrt(uniform());  // Lambertian: cos theta distributed as sqrt(u)
                    if (mu <= 0) mu = 1e-12;
                    continue;
                }
                r.package_photons += 1;
                r.package_energy += 1 / grid_nm(k);
                if (u < chip_absorbs) {
                    r.chip_photons += 1;
                    r.chip_energy += 1 / grid_nm(k);
                }
                break;
            }
            if (!(mt > 0)) {  // no interaction and moving parallel to the faces cannot happen: mu != 0
                mu = mu > 0 ? 1 : -1;
                continue;
            }
            z = z_next;
            if (uniform() * mt < med.scattering[k]) {
                const double c = hg_cos(uniform());
                const double phi = pi2 * uniform();
                mu = mu * c + std::sqrt(std::max(0.0, 1 - mu * mu)) * std::sqrt(std::max(0.0, 1 - c * c)) * std::cos(phi);
                if (mu == 0) mu = 1e-12;
                continue;
            }
            // Absorbed: by phosphor j with mu_a,j / mu_a.
            double pick = uniform() * mu_a[k];
            std::size_t j = 0;
            while (j + 1 < nc && pick >= med.components[j].absorption[k]) pick -= med.components[j++].absorption[k];
            auto& c = r.components[j];
            c.absorbed += 1;
            if (is_pump) c.pump_absorbed += 1;
            c.absorbed_energy += 1 / grid_nm(k);
            if (uniform() >= med.components[j].quantum_efficiency || emission[j].empty()) break;  // non-radiative
            k = emission[j](uniform());
            c.emitted += 1;
            c.emitted_energy += 1 / grid_nm(k);
            is_pump = false;
            owner = j;
            mu = 2 * uniform() - 1;  // isotropic
            if (mu == 0) mu = 1e-12;
        }
    }
    const double inv = 1.0 / static_cast<double>(photons);
    for (auto& v : r.leaked) v *= inv;
    for (auto& v : r.converted) v *= inv;
    for (auto& c : r.components) {
        c.pump_absorbed *= inv, c.absorbed *= inv, c.emitted *= inv, c.escaping *= inv;
        c.absorbed_energy *= inv, c.emitted_energy *= inv, c.escaping_energy *= inv;
    }
    r.package_photons *= inv;
    r.package_energy *= inv;
    r.chip_photons *= inv;
    r.chip_energy *= inv;
    return r;
}

}  // namespace lampwright
