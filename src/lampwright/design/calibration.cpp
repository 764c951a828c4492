#include "lampwright/design/calibration.hpp"

#include "lampwright/core/bandpass.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/phosphor/excitation.hpp"
#include "lampwright/phosphor/mercury_discharge.hpp"

#include <Eigen/Dense>
#include <unsupported/Eigen/LevenbergMarquardt>
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>

namespace lampwright {

namespace {

constexpr double kFactorLower = 1e-3, kFactorUpper = 1e3;
constexpr double kLineLower = 0.0, kLineUpper = 0.5;  // the recipe key's own range (mercury_lines)
constexpr double kScaleLower = 1e-6, kScaleUpper = 1e6;

bool log_scaled(const CalibrationParameter& q) { return q.kind != CalibrationParameterKind::line_fraction; }

double sigmoid(double u) { return 1.0 / (1.0 + std::exp(-u)); }

// Bounds by a change of variable (Press et al. 2007, ch. 15.5, note on constraints): the solver
// works on an unbounded u; x = lo + (hi - lo) sigmoid(u), in log space for factors and scales.
double to_value(const CalibrationParameter& q, double u) {
    if (log_scaled(q)) {
        const double a = std::log(q.lower), b = std::log(q.upper);
        return std::exp(a + (b - a) * sigmoid(u));
    }
    return q.lower + (q.upper - q.lower) * sigmoid(u);
}

double to_internal(const CalibrationParameter& q, double x) {
    double t = log_scaled(q) ? (std::log(x) - std::log(q.lower)) / (std::log(q.upper) - std::log(q.lower)) : (x - q.lower) / (q.upper - q.lower);
    t = std::clamp(t, 1e-9, 1 - 1e-9);
    return std::log(t / (1 - t));
}

}  // namespace

CalibrationGrid measurement_grid(const SampledSpectrum& m, const std::string& label) {
    CalibrationGrid g;
    for (double w : m.wavelengths_nm) {
        if (std::abs(w - std::round(w)) > 1e-9 || w < kEmissionFirstNm || w > kEmissionLastNm)
            throw Error(fmt::format("trial '{}': calibration needs whole-nm wavelengths within {}-{} nm ({:g} nm is not)", label,
                                    kEmissionFirstNm, kEmissionLastNm, w));
        g.nm.push_back(static_cast<int>(std::lround(w)));
    }
    if (g.nm.size() < 3) throw Error(fmt::format("trial '{}': too few points in the spectrum", label));
    g.step = g.nm[1] - g.nm[0];
    for (std::size_t i = 1; i < g.nm.size(); ++i)
        if (g.nm[i] - g.nm[i - 1] != g.step) throw Error(fmt::format("trial '{}': calibration needs a uniform wavelength step", label));
    return g;
}

namespace {

std::string lamp_type_of(const BlendInput& b) { return b.lamp_type ? *b.lamp_type : infer_lamp_type(b.components); }

}  // namespace

std::string CalibrationParameter::describe() const {
    switch (kind) {
        case CalibrationParameterKind::absorption_factor: return "absorption factor of " + name;
        case CalibrationParameterKind::line_fraction: return "mercury-line fraction (" + name + ")";
        case CalibrationParameterKind::scale: return "scale of trial " + name;
        case CalibrationParameterKind::mass_absorption_scale: return "mass absorption scale";
        case CalibrationParameterKind::scattering_scale: return "scattering scale";
        case CalibrationParameterKind::brightness_factor: return "brightness factor of " + name;
    }
    return name;
}

CalibrationProblem::CalibrationProblem(const std::vector<CalibrationTrial>& trials, const CalibrationOptions& o) {
    if (trials.empty()) throw Error("calibration needs at least one trial");
    // Phosphors in order of first appearance; in how many trials each is; whether it ever shares
    // a trial with another phosphor (alone, its share is 1 whatever its factor).
    std::vector<std::string> ids;
    std::map<std::string, int> trial_count;
    std::map<std::string, bool> mixed;
    for (const auto& t : trials) {
        if (t.blend.excitation.kind != Excitation::Kind::mercury)
            throw Error(fmt::format("trial '{}': recipe {} has an LED pump; calibration fits mercury discharge lamps (excitation_nm = 253.7)",
                                    t.label, t.recipe_path));
        if (t.blend.components.empty()) throw Error(fmt::format("trial '{}': recipe {} has no components", t.label, t.recipe_path));
        std::vector<std::string> here;
        for (const auto& c : t.blend.components)
            if (std::find(here.begin(), here.end(), c.phosphor.id) == here.end()) here.push_back(c.phosphor.id);
        for (const auto& id : here) {
            if (std::find(ids.begin(), ids.end(), id) == ids.end()) ids.push_back(id);
            ++trial_count[id];
            if (here.size() > 1) mixed[id] = true;
        }
    }
    std::vector<std::string> fitted;
    for (const auto& id : ids) {
        if (mixed[id]) fitted.push_back(id);
        else notes_.push_back(fmt::format("the absorption factor of {} cannot be fitted: it is in no trial together with another phosphor "
                                          "(alone it takes every absorbed photon whatever its factor); it is left out of the calibration", id));
    }
    // The reference: the phosphor in most trials (the first listed among equals), so that the
    // other factors are tied to it through as many trials as possible.
    for (const auto& id : fitted)
        if (reference_.empty() || trial_count[id] > trial_count[reference_]) reference_ = id;
    if (!reference_.empty()) {
        bool tie = false;
        for (const auto& id : fitted) tie = tie || (id != reference_ && trial_count[id] == trial_count[reference_]);
        reference_reason_ = fmt::format("in {} of {} trials, the most used{}; its factor is 1 by definition, since the absorbed shares are relative",
                                        trial_count[reference_], trials.size(), tie ? " (the first listed among equals)" : "");
    }
    std::map<std::string, int> factor_of;
    for (const auto& id : fitted) {
        if (id == reference_) continue;
        factor_of[id] = static_cast<int>(parameters_.size());
        parameters_.push_back({CalibrationParameterKind::absorption_factor, id, kFactorLower, kFactorUpper, 1.0});
    }
    std::map<std::string, int> line_of;
    for (const auto& t : trials) {
        const std::string type = lamp_type_of(t.blend);
        if (line_of.count(type)) continue;
        line_of[type] = static_cast<int>(parameters_.size());
        const double start = std::clamp(mercury_line_set(type).visible_fraction, 1e-3, 0.45);
        parameters_.push_back({CalibrationParameterKind::line_fraction, type, kLineLower, kLineUpper, start});
    }
    for (const auto& t : trials) {
        Trial tr;
        tr.blend = t.blend;
        double total = 0;
        for (const auto& c : t.blend.components) total += c.mass_fraction;
        if (!(total > 0)) throw Error(fmt::format("trial '{}': mass fractions must be greater than zero", t.label));
        for (const auto& c : t.blend.components) {
            tr.mass_fraction.push_back(c.mass_fraction / total);
            tr.base_absorption.push_back(c.absorption ? *c.absorption : absorption_for(c.phosphor, t.blend.excitation));
            const auto f = factor_of.find(c.phosphor.id);
            tr.factor_index.push_back(f == factor_of.end() ? -1 : f->second);
        }
        if (t.blend.mercury_line_fraction)
            notes_.push_back(fmt::format("trial '{}': the recipe's mercury_lines = {:g} is a start value only; the line fraction is fitted", t.label,
                                         *t.blend.mercury_line_fraction));
        tr.line_index = line_of[lamp_type_of(t.blend)];
        tr.scale_index = static_cast<int>(parameters_.size());
        parameters_.push_back({CalibrationParameterKind::scale, t.label, kScaleLower, kScaleUpper, 1.0});
        const CalibrationGrid g = measurement_grid(t.measured, t.label);
        tr.bandwidth = o.bandwidth_nm > 0 ? o.bandwidth_nm : g.step;
        double norm = 0;
        for (std::size_t i = 0; i < g.nm.size(); ++i) {
            if (g.nm[i] < 380 || g.nm[i] > 780) continue;
            tr.grid_nm.push_back(g.nm[i]);
            tr.measured.push_back(t.measured.values[i]);
            norm += t.measured.values[i] * t.measured.values[i];
        }
        if (tr.grid_nm.size() < 3) throw Error(fmt::format("trial '{}': too few points within 380-780 nm", t.label));
        if (!(norm > 0)) throw Error(fmt::format("trial '{}': the spectrum has no power within 380-780 nm", t.label));
        for (double& v : tr.measured) v /= std::sqrt(norm);
        tr.first_row = residual_count_;
        residual_count_ += tr.grid_nm.size();
        trials_.push_back(std::move(tr));
    }
    // Checks the recipes once at the start values, so an impossible blend fails here with its name.
    std::vector<double> p0;
    for (const auto& q : parameters_) p0.push_back(q.start);
    for (std::size_t t = 0; t < trials_.size(); ++t) {
        try {
            (void)model_spectrum(t, p0);
        } catch (const Error& e) {
            throw Error(fmt::format("trial '{}': {}", trials[t].label, e.what()));
        }
    }
}

Spectrum CalibrationProblem::model_spectrum(std::size_t t, const std::vector<double>& p) const {
    const Trial& tr = trials_.at(t);
    BlendInput in = tr.blend;
    for (std::size_t i = 0; i < in.components.size(); ++i)
        in.components[i].absorption = tr.base_absorption[i] * (tr.factor_index[i] < 0 ? 1.0 : p[static_cast<std::size_t>(tr.factor_index[i])]);
    in.mercury_line_fraction = p[static_cast<std::size_t>(tr.line_index)];
    // The blend's light is linear in the photon shares (phosphor/blend.hpp): sum_i s_i light_i.
    const BlendBasis b = blend_basis(in);
    const std::vector<double> s = photon_shares(b, tr.mass_fraction);
    Spectrum out = emission_grid(in.name);
    for (std::size_t i = 0; i < s.size(); ++i)
        for (std::size_t k = 0; k < out.values.size(); ++k) out.values[k] += s[i] * b.light[i].values[k];
    return out;
}

void CalibrationProblem::trial_residuals_into(std::size_t t, const std::vector<double>& p, double* out) const {
    const Trial& tr = trials_[t];
    const std::vector<double> m = values_at(triangular_bandpass(model_spectrum(t, p), tr.bandwidth), tr.grid_nm);
    double norm = 0;
    for (double v : m) norm += v * v;
    norm = std::sqrt(norm);
    if (!(norm > 0)) throw Error("the model gives no light within 380-780 nm");
    const double k = p[static_cast<std::size_t>(tr.scale_index)];
    for (std::size_t i = 0; i < m.size(); ++i) out[i] = k * m[i] / norm - tr.measured[i];
}

std::vector<double> CalibrationProblem::residuals(const std::vector<double>& p) const {
    if (p.size() != parameters_.size()) throw Error("calibration: one value per parameter");
    std::vector<double> r(residual_count_);
    for (std::size_t t = 0; t < trials_.size(); ++t) trial_residuals_into(t, p, r.data() + trials_[t].first_row);
    return r;
}

std::vector<double> block_norms(const std::vector<double>& r, const std::vector<std::size_t>& sizes) {
    std::vector<double> out;
    std::size_t row = 0;
    for (std::size_t n : sizes) {
        double s = 0;
        for (std::size_t i = 0; i < n; ++i, ++row) s += r.at(row) * r.at(row);
        out.push_back(std::sqrt(s));
    }
    return out;
}

std::vector<double> CalibrationProblem::trial_residuals(const std::vector<double>& p) const {
    std::vector<std::size_t> sizes;
    for (const auto& tr : trials_) sizes.push_back(tr.grid_nm.size());
    return block_norms(residuals(p), sizes);
}

ModelCalibration CalibrationProblem::calibration(const std::vector<double>& p, const std::vector<double>& sd) const {
    ModelCalibration c;
    c.reference = reference_;
    if (!reference_.empty()) c.phosphors.push_back({reference_, 1.0, 0.0});
    for (std::size_t j = 0; j < parameters_.size(); ++j) {
        const auto& q = parameters_[j];
        if (q.kind == CalibrationParameterKind::absorption_factor) c.phosphors.push_back({q.name, p[j], sd[j]});
        if (q.kind == CalibrationParameterKind::line_fraction) c.lamp_types.push_back({q.name, p[j], sd[j]});
    }
    return c;
}

namespace {

// Eigen's Levenberg-Marquardt (unsupported module; More 1978) on the internal variables u.
struct LmFunctor : Eigen::DenseFunctor<double> {
    const ResidualProblem& problem;
    int* evaluations;
    LmFunctor(const ResidualProblem& pr, int* ev)
        : Eigen::DenseFunctor<double>(static_cast<int>(pr.parameters().size()), static_cast<int>(pr.residual_count())), problem(pr), evaluations(ev) {}
    std::vector<double> values_of(const InputType& u) const {
        std::vector<double> p(problem.parameters().size());
        for (std::size_t j = 0; j < p.size(); ++j) p[j] = to_value(problem.parameters()[j], u(static_cast<Eigen::Index>(j)));
        return p;
    }
    int operator()(const InputType& u, ValueType& f) const {
        ++*evaluations;
        const std::vector<double> r = problem.residuals(values_of(u));
        for (std::size_t i = 0; i < r.size(); ++i) f(static_cast<Eigen::Index>(i)) = r[i];
        return 0;
    }
    // Central differences: the residual is smooth in every parameter.
    int df(const InputType& u, JacobianType& jac) const {
        for (Eigen::Index j = 0; j < u.size(); ++j) {
            const double h = 1e-6 * (1.0 + std::abs(u(j)));
            InputType up = u, dn = u;
            up(j) += h;
            dn(j) -= h;
            ValueType fu(values()), fd(values());
            (*this)(up, fu);
            (*this)(dn, fd);
            jac.col(j) = (fu - fd) / (2 * h);
        }
        return 0;
    }
};

// The Jacobian of the residuals in the parameters themselves (for the covariance), by central
// differences, one-sided where a bound is near.
Eigen::MatrixXd value_jacobian(const ResidualProblem& pr, const std::vector<double>& p) {
    const auto& qs = pr.parameters();
    Eigen::MatrixXd j(static_cast<Eigen::Index>(pr.residual_count()), static_cast<Eigen::Index>(qs.size()));
    for (std::size_t c = 0; c < qs.size(); ++c) {
        const double typical = qs[c].kind == CalibrationParameterKind::line_fraction ? 0.01 : 1.0;
        const double h = 1e-6 * std::max(std::abs(p[c]), typical);
        std::vector<double> up = p, dn = p;
        up[c] = std::min(p[c] + h, qs[c].upper);
        dn[c] = std::max(p[c] - h, qs[c].lower);
        const std::vector<double> ru = pr.residuals(up), rd = pr.residuals(dn);
        for (std::size_t i = 0; i < ru.size(); ++i) j(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(c)) = (ru[i] - rd[i]) / (up[c] - dn[c]);
    }
    return j;
}

std::string lm_status(Eigen::LevenbergMarquardtSpace::Status s) {
    using namespace Eigen::LevenbergMarquardtSpace;
    switch (s) {
        case RelativeReductionTooSmall: return "converged (relative reduction of the sum of squares below tolerance)";
        case RelativeErrorTooSmall: return "converged (relative change of the parameters below tolerance)";
        case RelativeErrorAndReductionTooSmall: return "converged (parameters and sum of squares)";
        case CosinusTooSmall: return "converged (residual orthogonal to the Jacobian)";
        case TooManyFunctionEvaluation: return "stopped: too many evaluations";
        case FtolTooSmall: case XtolTooSmall: case GtolTooSmall: return "converged (at machine precision)";
        default: return "ended (status " + std::to_string(static_cast<int>(s)) + ")";
    }
}

}  // namespace

LeastSquaresFit fit_least_squares(const ResidualProblem& problem, const CalibrationOptions& o) {
    const auto& qs = problem.parameters();
    const std::size_t np = qs.size();
    LeastSquaresFit res;
    res.n = problem.residual_count();
    res.p = np;
    LmFunctor functor(problem, &res.evaluations);
    Eigen::VectorXd u(static_cast<Eigen::Index>(np));
    for (std::size_t j = 0; j < np; ++j) u(static_cast<Eigen::Index>(j)) = to_internal(qs[j], qs[j].start);
    Eigen::LevenbergMarquardt<LmFunctor> lm(functor);
    lm.setFtol(1e-15);
    lm.setXtol(1e-13);
    lm.setMaxfev(400 * static_cast<Eigen::Index>(np + 1));
    const auto status = lm.minimize(u);
    res.solver = "Levenberg-Marquardt (Eigen): " + lm_status(status);
    if (status == Eigen::LevenbergMarquardtSpace::TooManyFunctionEvaluation)
        res.warnings.push_back("the least-squares fit stopped at its evaluation limit before converging: check the trials");
    const std::vector<double> p = functor.values_of(u);
    const std::vector<double> r = problem.residuals(p);
    for (double v : r) res.rss += v * v;

    // Covariance cov = s^2 (J^T J)^-1 (Press et al. 2007, eq. 15.4.x / 15.5.15; Bates and Watts 1988,
    // 2.3), inverted on the eigenbasis of the information matrix scaled to unit diagonal so that a
    // near-singular direction is seen and named, not inverted into noise.
    const Eigen::MatrixXd jac = value_jacobian(problem, p);
    const Eigen::MatrixXd info = jac.transpose() * jac;
    const auto npi = static_cast<Eigen::Index>(np);
    Eigen::VectorXd d(npi);
    std::vector<bool> undetermined(np, false);
    for (Eigen::Index j = 0; j < npi; ++j) {
        d(j) = std::sqrt(info(j, j));
        if (!(d(j) > 0)) {
            undetermined[static_cast<std::size_t>(j)] = true;
            res.warnings.push_back(fmt::format("the trials do not determine the {}: the spectra do not change with it", qs[static_cast<std::size_t>(j)].describe()));
            d(j) = 1;
        }
    }
    const Eigen::MatrixXd scaled = d.asDiagonal().inverse() * info * d.asDiagonal().inverse();
    Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> eig(scaled);
    const double lmax = eig.eigenvalues().maxCoeff();
    Eigen::MatrixXd inv = Eigen::MatrixXd::Zero(npi, npi);
    for (Eigen::Index k = 0; k < npi; ++k) {
        const double l = eig.eigenvalues()(k);
        const Eigen::VectorXd v = eig.eigenvectors().col(k);
        if (l > o.min_relative_eigenvalue * lmax) {
            inv += v * v.transpose() / l;
            continue;
        }
        // A direction the trials hardly see: the parameters that carry it cannot be separated.
        std::vector<std::size_t> order(np);
        for (std::size_t j = 0; j < np; ++j) order[j] = j;
        std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
            return std::abs(v(static_cast<Eigen::Index>(a))) > std::abs(v(static_cast<Eigen::Index>(b)));
        });
        for (std::size_t j : order)
            if (std::abs(v(static_cast<Eigen::Index>(j))) > 0.1) undetermined[j] = true;
        if (np >= 2)
            res.warnings.push_back(fmt::format("the trials cannot separate the {} and the {} (the information matrix is near singular: "
                                               "relative eigenvalue {:.1e}); their uncertainties are not stated. Add trials that vary them differently",
                                               qs[order[0]].describe(), qs[order[1]].describe(), std::max(0.0, l / lmax)));
    }
    const std::size_t dof = res.n > np ? res.n - np : 0;
    res.s2 = dof > 0 ? res.rss / static_cast<double>(dof) : std::numeric_limits<double>::quiet_NaN();
    if (dof == 0) res.warnings.push_back("as many parameters as measured points: no uncertainties");
    const Eigen::MatrixXd cov = res.s2 * (d.asDiagonal().inverse() * inv * d.asDiagonal().inverse());
    const double nan = std::numeric_limits<double>::quiet_NaN();
    std::vector<double> sd(np);
    for (std::size_t j = 0; j < np; ++j) {
        const auto jj = static_cast<Eigen::Index>(j);
        sd[j] = undetermined[j] ? nan : std::sqrt(std::max(0.0, cov(jj, jj)));
    }
    res.correlation.assign(np, std::vector<double>(np, nan));
    for (std::size_t a = 0; a < np; ++a) {
        for (std::size_t b = 0; b < np; ++b) {
            const auto ia = static_cast<Eigen::Index>(a), ib = static_cast<Eigen::Index>(b);
            if (undetermined[a] || undetermined[b]) continue;
            const double den = std::sqrt(cov(ia, ia) * cov(ib, ib));
            res.correlation[a][b] = a == b ? 1.0 : den > 0 ? cov(ia, ib) / den : nan;
        }
    }
    for (std::size_t a = 0; a < np; ++a)
        for (std::size_t b = a + 1; b < np; ++b) {
            const double c = res.correlation[a][b];
            if (std::isfinite(c) && std::abs(c) > o.max_correlation)
                res.warnings.push_back(fmt::format("the trials hardly separate the {} and the {} (correlation {:+.3f}, above {:g}): "
                                                   "add trials that vary them differently",
                                                   qs[a].describe(), qs[b].describe(), c, o.max_correlation));
        }
    for (std::size_t j = 0; j < np; ++j) {
        CalibrationParameter q = qs[j];
        q.value = p[j];
        q.sd = sd[j];
        if (!undetermined[j] && (q.value <= q.lower * 1.0001 + 1e-12 || q.value >= q.upper * 0.9999))
            res.warnings.push_back(fmt::format("the {} ended at its bound ({:g}): the model cannot fit these trials with a value inside", q.describe(), q.value));
        res.parameters.push_back(q);
    }
    res.values = p;
    res.sd = sd;
    return res;
}

CalibrationResult calibrate_model(const std::vector<CalibrationTrial>& trials, const CalibrationOptions& o) {
    const CalibrationProblem problem(trials, o);
    LeastSquaresFit fit = fit_least_squares(problem, o);
    CalibrationResult res;
    res.reference = problem.reference();
    res.reference_reason = problem.reference_reason();
    res.warnings = problem.notes();
    res.warnings.insert(res.warnings.end(), fit.warnings.begin(), fit.warnings.end());
    res.n = fit.n;
    res.p = fit.p;
    res.rss = fit.rss;
    res.s2 = fit.s2;
    res.evaluations = fit.evaluations;
    res.solver = fit.solver;
    res.parameters = fit.parameters;
    res.correlation = fit.correlation;
    const std::vector<double>& p = fit.values;
    const std::vector<double>& sd = fit.sd;
    res.calibration = problem.calibration(p, sd);
    const std::vector<double> per_trial = problem.trial_residuals(p);
    for (std::size_t t = 0; t < trials.size(); ++t) {
        std::size_t points = 0;
        for (double w : trials[t].measured.wavelengths_nm) points += (w >= 380 && w <= 780) ? 1 : 0;
        res.trials.push_back({trials[t].label, trials[t].recipe_path, trials[t].spectrum_path, per_trial[t], points});
    }
    return res;
}

}  // namespace lampwright
