#include "lampwright/production/qc.hpp"

#include "lampwright/colour/illuminants.hpp"
#include "lampwright/core/interpolation.hpp"
#include "lampwright/core/parallel.hpp"
#include "lampwright/io/spectrum_io.hpp"
#include "lampwright/core/statistics.hpp"
#include "lampwright/core/text_encoding.hpp"
#include "lampwright/io/toml_access.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <atomic>
#include <cmath>
#include <cstdint>
#include <exception>
#include <filesystem>
#include <map>
#include <mutex>
#include <numeric>
#include <sstream>
#include <system_error>
#include <thread>
#include <tuple>

#include <sys/stat.h>

namespace lampwright {

namespace {


bool is_spectrum_file(const std::filesystem::path& p) {
    const auto e = p.extension().string();
    return e == ".csv" || e == ".txt" || e == ".tsv" || e == ".xml" || e == ".spd";
}

}  // namespace

QcSpec load_qc_spec(const std::string& path) {
    const TomlDoc doc = TomlDoc::from_file(path);
    const auto& r = doc.root();
    doc.only_keys(r, {"name", "target", "limits"}, "");
    QcSpec s;
    s.path = path;
    s.name = doc.require_string(r, "name", "");
    const auto* t = doc.table(r, "target", "");
    if (!t) doc.fail(&r, "", "missing [target] (flamp, ansi_class, or x and y)");
    doc.only_keys(*t, {"flamp", "ansi_class", "x", "y", "steps", "duv_prime_max"}, "target");
    const auto flamp = doc.string(*t, "flamp", "target");
    const auto ansi = doc.number(*t, "ansi_class", "target");
    const auto x = doc.number(*t, "x", "target"), y = doc.number(*t, "y", "target");
    const int given = (flamp ? 1 : 0) + (ansi ? 1 : 0) + ((x || y) ? 1 : 0);
    if (given != 1) doc.fail(t, "target", "give exactly one of: flamp = \"F4100\", ansi_class = 4000, or x and y");
    const auto steps = doc.number(*t, "steps", "target");
    if (steps && !(*steps > 0 && *steps <= 20)) doc.fail(t->get("steps"), "target.steps", fmt::format("must lie in (0, 20], not {:g}", *steps));
    try {
        if (flamp) {
            const Target tg = target_ansi_c78376(*flamp, steps.value_or(kAnsiC78376Steps));
            s.region = QcSpec::Region::ellipse;
            s.centre = tg.xy;
            s.step_ellipse = *tg.ellipse;
            s.max_steps = tg.ellipse_steps;
            s.target_description = tg.description;
        } else if (ansi) {
            const Target tg = target_ansi_c78377(static_cast<int>(std::lround(*ansi)));
            s.region = QcSpec::Region::ansi_quadrangle;
            s.centre = tg.xy;
            s.ansi_class = tg.ansi_class;
            s.step_ellipse = nearest_step_ellipse(s.centre);
            s.target_description = tg.description;
        } else {
            if (!x || !y) doc.fail(t, "target", "an explicit centre needs both x and y");
            if (!(*x > 0 && *x < 0.8 && *y > 0 && *y < 0.9)) doc.fail(t->get("x"), "target", fmt::format("({:g}, {:g}) is not a CIE 1931 chromaticity", *x, *y));
            s.centre = {*x, *y};
            s.step_ellipse = nearest_step_ellipse(s.centre);
            const auto radius = doc.number(*t, "duv_prime_max", "target");
            if (radius && steps) doc.fail(t, "target", "give steps (ellipse) or duv_prime_max (circle), not both");
            if (radius) {
                if (!(*radius > 0 && *radius < 0.05)) doc.fail(t->get("duv_prime_max"), "target.duv_prime_max", fmt::format("must lie in (0, 0.05), not {:g}", *radius));
                s.region = QcSpec::Region::circle;
                s.max_duv_prime = *radius;
                s.target_description = fmt::format("x {:.4f}, y {:.4f} within du'v' {:g}", *x, *y, *radius);
            } else {
                s.region = QcSpec::Region::ellipse;
                s.max_steps = steps.value_or(kAnsiC78376Steps);
                s.target_description = fmt::format("x {:.4f}, y {:.4f}, {:g}-step ellipse", *x, *y, s.max_steps);
            }
        }
    } catch (const InputError&) {
        throw;
    } catch (const Error& e) {
        doc.fail(t, "target", e.what());
    }
    if (const auto* l = doc.table(r, "limits", "")) {
        std::vector<std::string> known{"ra_min", "r9_min", "cct_min_K", "cct_max_K", "duv_min", "duv_max", "flux_min_lm", "flux_max_lm", "efficacy_min_lm_per_W",
                                       "min_rf", "min_rg", "max_rg", "tm30_level"};
        for (int j = 1; j <= kTm30HueBins; ++j)
            for (const char* k : {"min_rf_h", "min_rcs_h", "max_rcs_h"}) known.push_back(fmt::format("{}{}", k, j));
        doc.only_keys(*l, known, "limits");
        s.ra_min = doc.number(*l, "ra_min", "limits");
        s.r9_min = doc.number(*l, "r9_min", "limits");
        s.cct_min_K = doc.number(*l, "cct_min_K", "limits");
        s.cct_max_K = doc.number(*l, "cct_max_K", "limits");
        s.duv_min = doc.number(*l, "duv_min", "limits");
        s.duv_max = doc.number(*l, "duv_max", "limits");
        s.flux_min_lm = doc.number(*l, "flux_min_lm", "limits");
        s.flux_max_lm = doc.number(*l, "flux_max_lm", "limits");
        s.efficacy_min_lm_per_W = doc.number(*l, "efficacy_min_lm_per_W", "limits");
        for (const char* k : {"flux_min_lm", "flux_max_lm", "efficacy_min_lm_per_W"})
            if (const auto v = doc.number(*l, k, "limits"); v && !(std::isfinite(*v) && *v >= 0))
                doc.fail(l->get(k), std::string("limits.") + k, fmt::format("must be a number >= 0, not {:g}", *v));
        if (s.flux_min_lm && s.flux_max_lm && *s.flux_min_lm >= *s.flux_max_lm)
            doc.fail(l->get("flux_min_lm"), "limits", fmt::format("flux_min_lm ({:g}) must be below flux_max_lm ({:g})", *s.flux_min_lm, *s.flux_max_lm));
        // The most efficacious white possible is below the 683 lm/W of 555 nm light.
        if (s.efficacy_min_lm_per_W && *s.efficacy_min_lm_per_W > kKm)
            doc.fail(l->get("efficacy_min_lm_per_W"), "limits.efficacy_min_lm_per_W", fmt::format("cannot exceed Km = {:g} lm/W", kKm));
        if (s.ra_min && *s.ra_min > 100) doc.fail(l->get("ra_min"), "limits.ra_min", "cannot exceed 100");
        // CIE 224:2017 eq. 10 puts Rf in 0-100 (its largest value is 10 ln(e^10 + 1) = 100.0005);
        // Rg is a ratio of areas, positive (TM-30-20).
        s.rf_min = doc.number(*l, "min_rf", "limits");
        s.rg_min = doc.number(*l, "min_rg", "limits");
        s.rg_max = doc.number(*l, "max_rg", "limits");
        if (s.rf_min && !(*s.rf_min >= 0 && *s.rf_min <= 100))
            doc.fail(l->get("min_rf"), "limits.min_rf", fmt::format("must lie in 0-100 (CIE 224 Rf), not {:g}", *s.rf_min));
        for (const char* k : {"min_rg", "max_rg"})
            if (const auto v = doc.number(*l, k, "limits"); v && !(std::isfinite(*v) && *v > 0 && *v <= 1000))
                doc.fail(l->get(k), std::string("limits.") + k, fmt::format("must be a number above 0 (TM-30 Rg, 100 for the reference), not {:g}", *v));
        if (s.rg_min && s.rg_max && *s.rg_min >= *s.rg_max)
            doc.fail(l->get("min_rg"), "limits", fmt::format("min_rg ({:g}) must be below max_rg ({:g})", *s.rg_min, *s.rg_max));
        // TM-30-20 hue bins: Rf,hj lies in 0-100 like Rf (CIE 224:2017 eq. 10 on the bin's mean
        // difference); Rcs,hj is a chroma change in per cent of the reference's, -100 % meaning no
        // chroma left; +-100 % bounds what a white light gives (common practice, no source).
        for (std::size_t j = 0; j < static_cast<std::size_t>(kTm30HueBins); ++j) {
            const std::string rf_key = fmt::format("min_rf_h{}", j + 1), lo_key = fmt::format("min_rcs_h{}", j + 1), hi_key = fmt::format("max_rcs_h{}", j + 1);
            s.rf_h_min[j] = doc.number(*l, rf_key, "limits");
            s.rcs_h_min_percent[j] = doc.number(*l, lo_key, "limits");
            s.rcs_h_max_percent[j] = doc.number(*l, hi_key, "limits");
            if (const auto& v = s.rf_h_min[j]; v && !(*v >= 0 && *v <= 100))
                doc.fail(l->get(rf_key), "limits." + rf_key, fmt::format("must lie in 0-100 (TM-30-20 Rf,h{}), not {:g}", j + 1, *v));
            for (const auto* k : {&lo_key, &hi_key})
                if (const auto v = doc.number(*l, *k, "limits"); v && !(*v >= -100 && *v <= 100))
                    doc.fail(l->get(*k), "limits." + *k, fmt::format("must lie in -100 to 100 (TM-30-20 Rcs,h{}, per cent), not {:g}", j + 1, *v));
            if (s.rcs_h_min_percent[j] && s.rcs_h_max_percent[j] && *s.rcs_h_min_percent[j] > *s.rcs_h_max_percent[j])
                doc.fail(l->get(lo_key), "limits",
                         fmt::format("{} ({:g}) must not be above {} ({:g})", lo_key, *s.rcs_h_min_percent[j], hi_key, *s.rcs_h_max_percent[j]));
        }
        if (l->contains("tm30_level")) {
            const auto level = l->get("tm30_level")->value<std::string>();
            if (!level) doc.fail(l->get("tm30_level"), "limits.tm30_level", "must be a string such as \"P1\"");
            try {
                const Tm30DesignLevel& d = tm30_design_level(*level);
                s.tm30_level = d.name;
                auto fill = [](std::optional<double>& v, const std::optional<double>& preset) {
                    if (!v) v = preset;
                };
                fill(s.rf_min, d.min_rf);
                fill(s.rg_min, d.min_rg);
                fill(s.rf_h_min[0], d.min_rf_h1);
                fill(s.rcs_h_min_percent[0], d.min_rcs_h1_percent);
                fill(s.rcs_h_max_percent[0], d.max_rcs_h1_percent);
                if (s.rg_min && s.rg_max && *s.rg_min >= *s.rg_max)
                    doc.fail(l->get("max_rg"), "limits", fmt::format("max_rg ({:g}) must be above the min_rg ({:g}) of tm30_level {}", *s.rg_max, *s.rg_min, d.name));
                if (s.rcs_h_min_percent[0] && s.rcs_h_max_percent[0] && *s.rcs_h_min_percent[0] > *s.rcs_h_max_percent[0])
                    doc.fail(l->get("tm30_level"), "limits", fmt::format("min_rcs_h1 ({:g}) is above max_rcs_h1 ({:g}) with tm30_level {}", *s.rcs_h_min_percent[0],
                                                                          *s.rcs_h_max_percent[0], d.name));
                s.notes.push_back(fmt::format("{}: {} ({})", d.name, kTm30LevelCaution, d.source));
            } catch (const InputError&) {
                throw;
            } catch (const Error& e) {
                doc.fail(l->get("tm30_level"), "limits.tm30_level", e.what());
            }
        }
        if (s.cct_min_K && s.cct_max_K && *s.cct_min_K >= *s.cct_max_K) doc.fail(l->get("cct_min_K"), "limits", fmt::format("cct_min_K ({:g}) must be below cct_max_K ({:g})", *s.cct_min_K, *s.cct_max_K));
        if (s.duv_min && s.duv_max && *s.duv_min >= *s.duv_max) doc.fail(l->get("duv_min"), "limits", fmt::format("duv_min ({:g}) must be below duv_max ({:g})", *s.duv_min, *s.duv_max));
        if ((s.cct_min_K && *s.cct_min_K < 100) || (s.cct_max_K && *s.cct_max_K < 100))
            doc.fail(l->get("cct_min_K") ? l->get("cct_min_K") : l->get("cct_max_K"), "limits", "CCT limits are in kelvin");
    }
    return s;
}

LampResult judge_lamp(const QcSpec& spec, Assessment a) {
    LampResult r;
    r.name = a.name;
    r.steps = macadam_steps(spec.step_ellipse, a.xy);
    const auto& A = a;
    switch (spec.region) {
        case QcSpec::Region::ellipse:
            r.inside_region = r.steps <= spec.max_steps;
            if (!r.inside_region) r.failures.push_back(fmt::format("chromaticity {:.2f} steps > {:g}", r.steps, spec.max_steps));
            break;
        case QcSpec::Region::ansi_quadrangle:
            r.inside_region = inside_ansi_c78377(*spec.ansi_class, A.xy);
            if (!r.inside_region) r.failures.push_back(fmt::format("chromaticity outside the ANSI C78.377 {} K quadrangle", spec.ansi_class->nominal_K));
            break;
        case QcSpec::Region::circle: {
            const UV c = uv_1976_from_xy(spec.centre);
            const double d = std::hypot(A.uv_prime.u - c.u, A.uv_prime.v - c.v);
            r.inside_region = d <= spec.max_duv_prime;
            if (!r.inside_region) r.failures.push_back(fmt::format("du'v' {:.4f} > {:g}", d, spec.max_duv_prime));
            break;
        }
    }
    const bool has_cct = A.cct.valid;
    const double ra = A.rendering ? A.rendering->ra : NAN, r9 = A.rendering ? A.rendering->ri[8] : NAN;
    if (spec.ra_min && !(ra >= *spec.ra_min)) r.failures.push_back(std::isfinite(ra) ? fmt::format("Ra {:.1f} < {:g}", ra, *spec.ra_min) : "Ra not defined (no CCT)");
    if (spec.r9_min && !(r9 >= *spec.r9_min)) r.failures.push_back(std::isfinite(r9) ? fmt::format("R9 {:.1f} < {:g}", r9, *spec.r9_min) : "R9 not defined (no CCT)");
    const double rf = A.fidelity ? A.fidelity->rf : NAN, rg = A.fidelity ? A.fidelity->rg : NAN;
    if (spec.rf_min && !(rf >= *spec.rf_min)) r.failures.push_back(std::isfinite(rf) ? fmt::format("Rf {:.1f} < {:g}", rf, *spec.rf_min) : "Rf not defined (no CCT)");
    if (spec.rg_min && !(rg >= *spec.rg_min)) r.failures.push_back(std::isfinite(rg) ? fmt::format("Rg {:.1f} < {:g}", rg, *spec.rg_min) : "Rg not defined (no CCT)");
    if (spec.rg_max && !(rg <= *spec.rg_max)) r.failures.push_back(std::isfinite(rg) ? fmt::format("Rg {:.1f} > {:g}", rg, *spec.rg_max) : "Rg not defined (no CCT)");
    for (std::size_t j = 0; j < static_cast<std::size_t>(kTm30HueBins); ++j) {
        // NaN (no CCT, or no sample in the bin) fails, as for Rf.
        const double rfh = A.fidelity ? A.fidelity->rf_h[j] : NAN, rcs = A.fidelity ? A.fidelity->rcs_h_percent[j] : NAN;
        const auto undefined = [&](const char* what) { return fmt::format("{},h{} not defined{}", what, j + 1, A.fidelity ? "" : " (no CCT)"); };
        if (const auto& v = spec.rf_h_min[j]; v && !(rfh >= *v))
            r.failures.push_back(std::isfinite(rfh) ? fmt::format("Rf,h{} {:.1f} < {:g}", j + 1, rfh, *v) : undefined("Rf"));
        if (const auto& v = spec.rcs_h_min_percent[j]; v && !(rcs >= *v))
            r.failures.push_back(std::isfinite(rcs) ? fmt::format("Rcs,h{} {:.1f} % < {:g} %", j + 1, rcs, *v) : undefined("Rcs"));
        if (const auto& v = spec.rcs_h_max_percent[j]; v && !(rcs <= *v))
            r.failures.push_back(std::isfinite(rcs) ? fmt::format("Rcs,h{} {:.1f} % > {:g} %", j + 1, rcs, *v) : undefined("Rcs"));
    }
    if (spec.cct_min_K && !(has_cct && A.cct.cct_K >= *spec.cct_min_K))
        r.failures.push_back(has_cct ? fmt::format("CCT {:.0f} K < {:g} K", A.cct.cct_K, *spec.cct_min_K) : "no CCT");
    if (spec.cct_max_K && !(has_cct && A.cct.cct_K <= *spec.cct_max_K))
        r.failures.push_back(has_cct ? fmt::format("CCT {:.0f} K > {:g} K", A.cct.cct_K, *spec.cct_max_K) : "no CCT");
    if (spec.duv_min && !(A.cct.duv >= *spec.duv_min)) r.failures.push_back(fmt::format("Duv {:.4f} < {:g}", A.cct.duv, *spec.duv_min));
    if (spec.duv_max && !(A.cct.duv <= *spec.duv_max)) r.failures.push_back(fmt::format("Duv {:.4f} > {:g}", A.cct.duv, *spec.duv_max));
    // Flux limits on a relative spectrum: the lamp fails (its flux is unknown, so it cannot be
    // shown to meet them), rather than the lot being refused: the other limits are still judged.
    if ((spec.flux_min_lm || spec.flux_max_lm || spec.efficacy_min_lm_per_W) && !A.luminous_flux_lm) {
        r.failures.push_back("relative spectrum: no flux");
    } else {
        if (spec.flux_min_lm && !(*A.luminous_flux_lm >= *spec.flux_min_lm))
            r.failures.push_back(fmt::format("flux {:.1f} lm < {:g} lm", *A.luminous_flux_lm, *spec.flux_min_lm));
        if (spec.flux_max_lm && !(*A.luminous_flux_lm <= *spec.flux_max_lm))
            r.failures.push_back(fmt::format("flux {:.1f} lm > {:g} lm", *A.luminous_flux_lm, *spec.flux_max_lm));
        if (spec.efficacy_min_lm_per_W) {
            if (!A.efficacy_lm_per_W)
                r.failures.push_back("no electrical power: no efficacy");
            else if (!(*A.efficacy_lm_per_W >= *spec.efficacy_min_lm_per_W))
                r.failures.push_back(fmt::format("efficacy {:.1f} lm/W < {:g} lm/W", *A.efficacy_lm_per_W, *spec.efficacy_min_lm_per_W));
        }
    }
    r.assessment = std::move(a);
    return r;
}

namespace {

// Why a path that names no readable file or folder is bad: a dangling link, a link loop, or missing.
std::string unreachable_reason(const std::filesystem::path& p, const std::error_code& status_error) {
    std::error_code ec;
    if (std::filesystem::is_symlink(std::filesystem::symlink_status(p, ec))) {
        if (status_error == std::errc::too_many_symbolic_link_levels) return "symbolic link loop (the link leads back to itself); skipped";
        const auto target = std::filesystem::read_symlink(p, ec);
        return fmt::format("dangling symbolic link (to '{}', which does not exist); skipped", target.string());
    }
    if (status_error && status_error != std::errc::no_such_file_or_directory) return fmt::format("cannot be read: {}", status_error.message());
    return "no such file or folder";
}

const char* special_kind(std::filesystem::file_type t) {
    switch (t) {
        case std::filesystem::file_type::fifo: return "a FIFO";
        case std::filesystem::file_type::socket: return "a socket";
        case std::filesystem::file_type::character: return "a character device";
        case std::filesystem::file_type::block: return "a block device";
        default: return "not a regular file";
    }
}

// A file's identity (device and inode): two names, one of them a symbolic link, for the same file.
struct FileId {
    std::uintmax_t dev = 0, ino = 0;
    bool operator<(const FileId& o) const { return dev != o.dev ? dev < o.dev : ino < o.ino; }
};

std::optional<FileId> file_id(const std::string& path) {
    struct stat st {};
    if (::stat(path.c_str(), &st) != 0) return std::nullopt;
    return FileId{static_cast<std::uintmax_t>(st.st_dev), static_cast<std::uintmax_t>(st.st_ino)};
}

}  // namespace

std::vector<std::string> collect_spectrum_files(const std::vector<std::string>& inputs, std::vector<BadFile>& bad) {
    namespace fs = std::filesystem;
    struct Found {
        std::string path;
        bool is_link = false;
        std::optional<FileId> id;
    };
    std::vector<Found> all;
    for (const auto& in : inputs) {
        std::error_code ec;
        const fs::file_status st = fs::status(in, ec);
        if (ec || !fs::exists(st)) {
            bad.push_back({in, unreachable_reason(in, ec)});
        } else if (fs::is_directory(st)) {
            std::vector<Found> found;
            // Every entry is examined with error codes, never exceptions: one bad entry (a link
            // loop, a dangling link) is named as a bad input and the rest of the folder is judged.
            fs::directory_iterator it(in, ec), end;
            if (ec) {
                bad.push_back({in, fmt::format("folder cannot be listed: {}", ec.message())});
                continue;
            }
            for (; it != end; it.increment(ec)) {
                if (ec) break;
                const fs::path p = it->path();
                if (!is_spectrum_file(p)) continue;
                std::error_code lec, sec;
                const bool is_link = fs::is_symlink(it->symlink_status(lec));
                const fs::file_status target = it->status(sec);
                if (sec || !fs::exists(target)) {
                    bad.push_back({p.string(), unreachable_reason(p, sec)});
                } else if (fs::is_regular_file(target)) {
                    found.push_back({p.string(), is_link, file_id(p.string())});
                } else if (!fs::is_directory(target)) {
                    // Reading a FIFO would wait for a writer; a device could never end.
                    bad.push_back({p.string(), fmt::format("is {}, not a regular file; skipped", special_kind(target.type()))});
                }
            }
            if (ec) bad.push_back({in, fmt::format("folder could not be listed to the end: {}", ec.message())});
            std::sort(found.begin(), found.end(), [](const Found& a, const Found& b) { return a.path < b.path; });
            if (found.empty()) bad.push_back({in, "folder holds no spectrum files (*.csv, *.txt, *.tsv, *.xml)"});
            all.insert(all.end(), found.begin(), found.end());
        } else {
            all.push_back({in, fs::is_symlink(fs::symlink_status(in, ec)), file_id(in)});
        }
    }
    // One file reached under two names (a symbolic link beside its target, or given twice) is
    // judged once, under the name that is not a link (else the first), so no lamp counts twice.
    std::map<FileId, std::size_t> keeper;
    for (std::size_t k = 0; k < all.size(); ++k) {
        if (!all[k].id) continue;
        const auto [pos, added] = keeper.emplace(*all[k].id, k);
        if (!added && all[pos->second].is_link && !all[k].is_link) pos->second = k;
    }
    std::vector<std::string> files;
    for (std::size_t k = 0; k < all.size(); ++k) {
        if (all[k].id && keeper.at(*all[k].id) != k) {
            bad.push_back({all[k].path, fmt::format("is the same file as {}; skipped so its lamps are judged once", all[keeper.at(*all[k].id)].path)});
            continue;
        }
        files.push_back(all[k].path);
    }
    return files;
}

std::string content_hash(const std::string& bytes) {
    std::uint64_t h = 1469598103934665603ULL;
    for (unsigned char c : bytes) {
        h ^= c;
        h *= 1099511628211ULL;
    }
    return fmt::format("{:016x}", h);
}

unsigned qc_worker_count(unsigned requested, std::size_t files) { return worker_count(requested, files); }

namespace {

// The centroid spectrum's running sum in fixed point (units of 2^-40 of a lamp's 380-780 nm sum):
// integer sums do not depend on the order the workers add lamps in, so the centroid is the same
// for any thread count. A value is at most a few times its lamp's sum (negative noise aside), so
// 2^40 per lamp leaves room for millions of lamps in an int64.
constexpr double kCentroidScale = 1099511627776.0;  // 2^40
struct CentroidSum {
    std::array<std::int64_t, kColourSize> sum{};
    int first = kColourFirstNm, last = kColourLastNm;  // the wavelengths every lamp so far covers
    std::size_t lamps = 0;
    void add(const Spectrum& s) {
        double total = 0;
        for (int nm = std::max(380, s.first_nm); nm <= std::min(780, s.last_nm()); ++nm) total += s.values[static_cast<std::size_t>(nm - s.first_nm)];
        if (!(total > 0) || !std::isfinite(total)) return;
        first = std::max(first, s.first_nm);
        last = std::min(last, s.last_nm());
        for (int nm = std::max(kColourFirstNm, s.first_nm); nm <= std::min(kColourLastNm, s.last_nm()); ++nm) {
            const double v = std::clamp(s.values[static_cast<std::size_t>(nm - s.first_nm)] / total, -4.0, 4.0);
            sum[static_cast<std::size_t>(nm - kColourFirstNm)] += std::llround(v * kCentroidScale);
        }
        ++lamps;
    }
    void add(const CentroidSum& o) {
        for (std::size_t i = 0; i < sum.size(); ++i) sum[i] += o.sum[i];
        first = std::max(first, o.first);
        last = std::min(last, o.last);
        lamps += o.lamps;
    }
};

}  // namespace

QcRun run_qc(const QcSpec& spec, const std::vector<std::string>& inputs, unsigned threads, const ProgressCallback& progress,
             const SpectrumReadOptions& read, bool keep_spectra) {
    QcRun run;
    run.spec = spec;
    const auto files = collect_spectrum_files(inputs, run.bad_files);
    std::vector<std::vector<LampResult>> per_file(files.size());
    std::vector<std::optional<BadFile>> bad(files.size());
    std::atomic<std::size_t> next{0}, done{0};
    std::mutex progress_mutex;
    AssessOptions options;
    (void)assess(planckian(3000), options);  // build the shared tables before the workers start
    std::exception_ptr unexpected;  // anything that is not std::exception: rethrown after the join
    std::mutex unexpected_mutex;
    CentroidSum centroid;
    std::mutex centroid_mutex;
    auto worker = [&] {
        CentroidSum local;
        for (std::size_t i = next++; i < files.size(); i = next++) {
            try {
                const std::string bytes = read_text_file(files[i]);
                SpectrumFile f = parse_spectrum_bytes(bytes, files[i], read);
                const std::string hash = content_hash(bytes);
                CentroidSum file_sum;
                for (auto& s : f.spectra) {
                    // 1 nm values are taken over, not copied, unless the spectrum is kept.
                    const Spectrum one_nm = keep_spectra ? resample_to_1nm(s) : resample_to_1nm(std::move(s));
                    file_sum.add(one_nm);
                    AssessOptions lamp_options = options;
                    lamp_options.cie224_interval_nm = cie224_interval_for(s.wavelengths_nm);  // 5 nm data at 5 nm (CIE 224:2017, 4.1)
                    LampResult lr = judge_lamp(spec, assess(one_nm, lamp_options));
                    // The file's warnings (a gap in the data, negative noise) hold for each of its lamps.
                    lr.assessment.warnings.insert(lr.assessment.warnings.begin(), f.warnings.begin(), f.warnings.end());
                    lr.file = sanitize_utf8(files[i]);  // shown and stored; the path itself may be in any encoding
                    lr.content_hash = hash;
                    if (keep_spectra) lr.spectrum = s;
                    per_file[i].push_back(std::move(lr));
                }
                local.add(file_sum);  // only a file judged whole counts
            } catch (const InputError& e) {
                bad[i] = BadFile{files[i], e.line() ? fmt::format("line {}: {}", e.line(), e.problem()) : e.problem()};
                per_file[i].clear();
            } catch (const Error& e) {
                bad[i] = BadFile{files[i], e.what()};
                per_file[i].clear();
            } catch (const std::exception& e) {
                // An exception escaping a thread ends the program (std::terminate): the file is
                // named as not judged instead (e.g. out of memory on it) and the rest go on.
                bad[i] = BadFile{files[i], fmt::format("could not be judged: {}", e.what())};
                per_file[i].clear();
            } catch (...) {
                std::lock_guard<std::mutex> lock(unexpected_mutex);
                if (!unexpected) unexpected = std::current_exception();
                per_file[i].clear();
            }
            const std::size_t d = ++done;
            if (progress) {
                std::lock_guard<std::mutex> lock(progress_mutex);
                try {
                    progress(d, files.size());
                } catch (...) {
                    std::lock_guard<std::mutex> lock2(unexpected_mutex);
                    if (!unexpected) unexpected = std::current_exception();
                }
            }
        }
        std::lock_guard<std::mutex> lock(centroid_mutex);
        centroid.add(local);
    };
    run_workers(qc_worker_count(threads, files.size()), worker);
    if (unexpected) std::rethrow_exception(unexpected);
    for (std::size_t i = 0; i < files.size(); ++i) {
        if (bad[i]) run.bad_files.push_back(*bad[i]);
    }
    // Bad files are only shown and stored: their names and reasons as valid UTF-8 (core/text_encoding.hpp).
    for (auto& b : run.bad_files) b.file = sanitize_utf8(b.file), b.reason = sanitize_utf8(b.reason);
    for (std::size_t i = 0; i < files.size(); ++i) {
        for (auto& l : per_file[i]) run.lamps.push_back(std::move(l));
    }
    run.stats = lot_statistics(spec, run.lamps);
    if (centroid.lamps > 0 && centroid.first <= centroid.last) {
        std::vector<double> v;
        for (int nm = centroid.first; nm <= centroid.last; ++nm)
            v.push_back(static_cast<double>(centroid.sum[static_cast<std::size_t>(nm - kColourFirstNm)]) / kCentroidScale / static_cast<double>(centroid.lamps));
        run.centroid = assess(Spectrum("lot centroid", centroid.first, std::move(v)), options);
    }
    return run;
}

double process_capability(double mean, double sd, std::optional<double> lower, std::optional<double> upper) {
    if (!(sd > 0) || (!lower && !upper)) return NAN;
    double ppk = INFINITY;
    if (upper) ppk = std::min(ppk, (*upper - mean) / (3 * sd));
    if (lower) ppk = std::min(ppk, (mean - *lower) / (3 * sd));
    return ppk;
}

std::pair<double, double> ppk_confidence_95(double ppk, std::size_t n) {
    if (n < 2 || !std::isfinite(ppk)) return {NAN, NAN};
    const double nn = static_cast<double>(n);
    const double half = 1.96 * std::sqrt(1.0 / (9.0 * nn) + ppk * ppk / (2.0 * (nn - 1.0)));
    return {ppk - half, ppk + half};
}

double outlier_scale_floor(const std::string& quantity) {
    // About the repeatability of a spectroradiometer measurement of one lamp (common practice,
    // no source): 0.0005 in x, y and Duv, 10 K in CCT, 0.5 in Ra, 1 in R9, 0.2 MacAdam steps.
    if (quantity == "x" || quantity == "y" || quantity == "duv") return 0.0005;
    if (quantity == "cct_K") return 10;
    if (quantity == "Ra") return 0.5;
    if (quantity == "R9") return 1;
    if (quantity == "Rf" || quantity == "Rg") return 0.5;  // like Ra (common practice, no source)
    if (quantity == "steps") return 0.2;
    return 0;
}

LotStatistics lot_statistics(const QcSpec& spec, std::vector<LampResult>& lamps) {
    LotStatistics st;
    st.count = lamps.size();
    for (const auto& l : lamps) st.passed += l.pass() ? 1 : 0;
    st.pass_rate = st.count ? static_cast<double>(st.passed) / static_cast<double>(st.count) : NAN;
    std::size_t outside = 0;
    for (const auto& l : lamps) outside += l.inside_region ? 0 : 1;
    st.fraction_outside_region = st.count ? static_cast<double>(outside) / static_cast<double>(st.count) : NAN;

    struct Quantity {
        const char* name;
        std::function<double(const LampResult&)> get;
        std::optional<double> lower, upper;
    };
    auto ra = [](const LampResult& l) { return l.assessment.rendering ? l.assessment.rendering->ra : NAN; };
    auto r9 = [](const LampResult& l) { return l.assessment.rendering ? l.assessment.rendering->ri[8] : NAN; };
    // Steps carry no limits here: no capability index on a distance (see LotStatistics).
    const std::vector<Quantity> quantities{
        {"x", [](const LampResult& l) { return l.assessment.xy.x; }, {}, {}},
        {"y", [](const LampResult& l) { return l.assessment.xy.y; }, {}, {}},
        {"cct_K", [](const LampResult& l) { return l.assessment.cct.valid ? l.assessment.cct.cct_K : NAN; }, spec.cct_min_K, spec.cct_max_K},
        {"duv", [](const LampResult& l) { return l.assessment.cct.duv; }, spec.duv_min, spec.duv_max},
        {"Ra", ra, spec.ra_min, {}},
        {"R9", r9, spec.r9_min, {}},
        {"steps", [](const LampResult& l) { return l.steps; }, {}, {}},
        {"flux_lm", [](const LampResult& l) { return l.assessment.luminous_flux_lm.value_or(NAN); }, spec.flux_min_lm, spec.flux_max_lm},
        {"efficacy_lm_per_W", [](const LampResult& l) { return l.assessment.efficacy_lm_per_W.value_or(NAN); }, spec.efficacy_min_lm_per_W, {}},
        // CIE 224:2017 Rf and TM-30-20 Rg: appended, so the earlier quantities keep their places.
        {"Rf", [](const LampResult& l) { return l.assessment.fidelity ? l.assessment.fidelity->rf : NAN; }, spec.rf_min, {}},
        {"Rg", [](const LampResult& l) { return l.assessment.fidelity ? l.assessment.fidelity->rg : NAN; }, spec.rg_min, spec.rg_max},
    };
    // Pass 1: robust outliers, so that pass 2 can give the statistics with and without them.
    std::vector<std::string> notes(lamps.size());
    for (auto& l : lamps) l.outlier = false;
    st.outliers_checked = lamps.size() >= kMinLotForOutliers;
    if (st.outliers_checked)
        for (const auto& q : quantities) {
            // Flux and efficacy scale with the lamp: no resolution floor holds for every lamp
            // size, and a lot of near-identical lamps would flag noise; they are not looked at.
            if (std::string(q.name) == "flux_lm" || std::string(q.name) == "efficacy_lm_per_W") continue;
            std::vector<double> v;
            for (const auto& l : lamps)
                if (const double x = q.get(l); std::isfinite(x)) v.push_back(x);
            if (v.size() < kMinLotForOutliers) continue;
            const double med = median(v);
            std::vector<double> dev;
            for (double x : v) dev.push_back(std::abs(x - med));
            // 1.4826 MAD estimates the standard deviation of normal data (1.4826 = 1 / 0.6745,
            // Iglewicz and Hoaglin 1993); the floor keeps measurement noise from looking like spread.
            const double scale = std::max(1.4826 * median(dev), outlier_scale_floor(q.name));
            if (!(scale > 0)) continue;
            for (std::size_t i = 0; i < lamps.size(); ++i) {
                const double z = (q.get(lamps[i]) - med) / scale;
                if (std::isfinite(z) && std::abs(z) > 3.5) {
                    lamps[i].outlier = true;
                    notes[i] += fmt::format("{}{} z={:+.1f}", notes[i].empty() ? "" : ", ", q.name, z);
                }
            }
        }
    for (std::size_t i = 0; i < lamps.size(); ++i) {
        lamps[i].outlier_note = notes[i];
        st.outliers += lamps[i].outlier ? 1 : 0;
    }
    // Pass 2: summaries over every lamp, capability with and without the flagged lamps.
    auto estimate = [](const std::vector<double>& v, std::optional<double> lower, std::optional<double> upper) {
        CapabilityEstimate e;
        e.n = v.size();
        e.mean = mean(v);
        e.sd = sample_sd(v);
        e.ppk = process_capability(e.mean, e.sd, lower, upper);
        std::tie(e.ppk_ci_low, e.ppk_ci_high) = ppk_confidence_95(e.ppk, e.n);
        return e;
    };
    for (const auto& q : quantities) {
        std::vector<double> v, kept;
        for (const auto& l : lamps)
            if (const double x = q.get(l); std::isfinite(x)) {
                v.push_back(x);
                if (!l.outlier) kept.push_back(x);
            }
        LotStatistics::Summary s{q.name, mean(v), sample_sd(v), v.empty() ? NAN : *std::min_element(v.begin(), v.end()),
                                 v.empty() ? NAN : *std::max_element(v.begin(), v.end())};
        st.summaries.push_back(s);
        if (q.lower || q.upper) st.capabilities.push_back({q.name, q.lower, q.upper, estimate(v, q.lower, q.upper), estimate(kept, q.lower, q.upper)});
    }
    // Centroid of the lot in CIE 1931 x, y (the mean chromaticity).
    st.centroid = {st.summaries[0].mean, st.summaries[1].mean};
    st.centroid_steps = std::isfinite(st.centroid.x) ? macadam_steps(spec.step_ellipse, st.centroid) : NAN;
    return st;
}

}  // namespace lampwright
