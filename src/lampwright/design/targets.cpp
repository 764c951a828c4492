#include "lampwright/design/targets.hpp"

#include "lampwright/core/embedded_data.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/core/format.hpp"
#include "lampwright/colour/temperature.hpp"

#include <fmt/format.h>

#include <cctype>
#include <charconv>
#include <cmath>
#include <numbers>
#include <sstream>

namespace lampwright {

namespace {

// A small table: '#' lines are provenance, the first other line is the header, then rows.
struct CsvTable {
    std::string source;
    std::vector<std::string> header;
    std::vector<std::vector<std::string>> rows;
    std::vector<std::size_t> lines;  // file line of each row
};

std::vector<std::string> split_commas(const std::string& line) {
    std::vector<std::string> cells;
    std::string cell;
    std::istringstream in(line);
    while (std::getline(in, cell, ',')) {
        while (!cell.empty() && std::isspace(static_cast<unsigned char>(cell.back()))) cell.pop_back();
        std::size_t i = 0;
        while (i < cell.size() && std::isspace(static_cast<unsigned char>(cell[i]))) ++i;
        cells.push_back(cell.substr(i));
    }
    return cells;
}

CsvTable read_csv(std::string_view text, const std::string& source) {
    CsvTable t;
    t.source = source;
    std::istringstream in{std::string(text)};
    std::string line;
    std::size_t n = 0;
    while (std::getline(in, line)) {
        ++n;
        if (!line.empty() && line.back() == '\r') line.pop_back();
        if (line.empty() || line.front() == '#') continue;
        auto cells = split_commas(line);
        if (t.header.empty()) {
            t.header = std::move(cells);
            continue;
        }
        if (cells.size() != t.header.size())
            throw InputError(source, n, fmt::format("{} cells, the header has {}", cells.size(), t.header.size()));
        t.rows.push_back(std::move(cells));
        t.lines.push_back(n);
    }
    if (t.header.empty() || t.rows.empty()) throw InputError(source, n, "no header or no rows");
    return t;
}

std::size_t column(const CsvTable& t, const std::string& name) {
    for (std::size_t i = 0; i < t.header.size(); ++i)
        if (t.header[i] == name) return i;
    throw InputError(t.source, 0, fmt::format("no column '{}'", name));
}

double number(const CsvTable& t, std::size_t row, const std::string& name) {
    const std::string& s = t.rows[row][column(t, name)];
    double v = 0;
    const auto [ptr, ec] = std::from_chars(s.data(), s.data() + s.size(), v);
    if (ec != std::errc() || ptr != s.data() + s.size() || !std::isfinite(v))
        throw InputError(t.source, t.lines[row], fmt::format("column '{}': '{}' is not a number", name, s));
    return v;
}

// Unit normal to the Planckian locus at T in CIE 1960 (u, v), pointing to Duv > 0 (above).
UV locus_normal(double cct_K) {
    const double h = 1e-4 * cct_K;
    const UV a = planck_uv(cct_K - h), b = planck_uv(cct_K + h);
    const double tu = b.u - a.u, tv = b.v - a.v, len = std::hypot(tu, tv);
    UV n{-tv / len, tu / len};
    if (n.v < 0) n = {-n.u, -n.v};
    return n;
}

}  // namespace

MacAdamEllipse macadam_ellipse(const Chromaticity& centre, double a, double b, double theta_deg) {
    if (!(a > 0) || !(b > 0)) throw Error(fmt::format("ellipse semi-axes must be positive, not a = {:g}, b = {:g}", a, b));
    MacAdamEllipse e{centre, a, b, theta_deg};
    const double t = theta_deg * std::numbers::pi / 180.0, c = std::cos(t), s = std::sin(t);
    const double ia = 1.0 / (a * a), ib = 1.0 / (b * b);
    e.g11 = c * c * ia + s * s * ib;
    e.g12 = s * c * (ia - ib);
    e.g22 = s * s * ia + c * c * ib;
    return e;
}

double macadam_steps(const MacAdamEllipse& e, const Chromaticity& xy) {
    const double dx = xy.x - e.centre.x, dy = xy.y - e.centre.y;
    const double q = e.g11 * dx * dx + 2 * e.g12 * dx * dy + e.g22 * dy * dy;
    // A chromaticity that is not a number (no light: 0/0) has no distance: NaN, never the 0 that
    // std::max(0.0, NaN) would give (which counted such a lamp as on the target).
    if (std::isnan(q)) return q;
    return std::sqrt(std::max(0.0, q));
}

Chromaticity xy_from_cct_duv(double cct_K, double duv) {
    if (!(cct_K >= kCctMinK && cct_K <= kCctMaxK))
        throw Error(fmt::format("CCT {:g} K is outside {:g}-{:g} K", cct_K, kCctMinK, kCctMaxK));
    if (!(std::abs(duv) <= kCctMaxDuv))
        throw Error(fmt::format("Duv {:g} is beyond +-{:g}, where CCT has no meaning (CIE 15:2004 9.5)", duv, kCctMaxDuv));
    const UV p = planck_uv(cct_K), n = locus_normal(cct_K);
    return xy_from_uv_1960({p.u + duv * n.u, p.v + duv * n.v});
}

const std::vector<AnsiC78377Class>& ansi_c78377_classes() {
    static const std::vector<AnsiC78377Class> table = [] {
        const CsvTable t = read_csv(embedded_file("targets/ansi_c78377.csv"), "data/targets/ansi_c78377.csv");
        std::vector<AnsiC78377Class> out;
        for (std::size_t i = 0; i < t.rows.size(); ++i)
            out.push_back({static_cast<int>(number(t, i, "nominal_K")), number(t, i, "cct_K"), number(t, i, "cct_tolerance_K"),
                           number(t, i, "duv_centre"), {number(t, i, "x"), number(t, i, "y")}});
        return out;
    }();
    return table;
}

const AnsiC78377Class& ansi_c78377_class(int nominal_K) {
    std::string names;
    for (const auto& c : ansi_c78377_classes()) {
        if (c.nominal_K == nominal_K) return c;
        names += fmt::format("{}{}", names.empty() ? "" : ", ", c.nominal_K);
    }
    throw Error(fmt::format("ANSI C78.377 has no {} K class; the classes are {} K", nominal_K, names));
}

std::array<Chromaticity, 4> ansi_c78377_quadrangle(const AnsiC78377Class& c) {
    const double lo = c.cct_K - c.cct_tolerance_K, hi = c.cct_K + c.cct_tolerance_K;
    const double d0 = c.duv_centre - kAnsiC78377DuvTolerance, d1 = c.duv_centre + kAnsiC78377DuvTolerance;
    return {xy_from_cct_duv(lo, d0), xy_from_cct_duv(hi, d0), xy_from_cct_duv(hi, d1), xy_from_cct_duv(lo, d1)};
}

bool inside_ansi_c78377(const AnsiC78377Class& c, const Chromaticity& xy) {
    const CctResult r = correlated_colour_temperature(uv_1960_from_xy(xy));
    if (!r.valid) return false;
    return std::abs(r.cct_K - c.cct_K) <= c.cct_tolerance_K && std::abs(r.duv - c.duv_centre) <= kAnsiC78377DuvTolerance;
}

const std::vector<FluorescentLampColour>& ansi_c78376_colours() {
    static const std::vector<FluorescentLampColour> table = [] {
        const CsvTable t = read_csv(embedded_file("targets/ansi_c78376.csv"), "data/targets/ansi_c78376.csv");
        std::vector<FluorescentLampColour> out;
        const std::size_t name = column(t, "lamp"), source = column(t, "source");
        for (std::size_t i = 0; i < t.rows.size(); ++i) {
            if (t.rows[i][source].empty()) throw InputError(t.source, t.lines[i], "column 'source' is empty: name the source or say 'from memory'");
            out.push_back({t.rows[i][name],
                           macadam_ellipse({number(t, i, "x"), number(t, i, "y")}, number(t, i, "a"), number(t, i, "b"), number(t, i, "theta_deg")),
                           t.rows[i][source]});
        }
        return out;
    }();
    return table;
}

const FluorescentLampColour& ansi_c78376_colour(const std::string& name) {
    std::string key;
    for (char ch : name) key += static_cast<char>(std::toupper(static_cast<unsigned char>(ch)));
    if (!key.empty() && key.front() != 'F') key = "F" + key;
    std::string names;
    for (const auto& c : ansi_c78376_colours()) {
        if (c.name == key) return c;
        names += (names.empty() ? "" : ", ") + c.name;
    }
    throw Error(fmt::format("ANSI C78.376 has no lamp colour '{}'; the colours are {}", name, names));
}

const std::vector<Tm30DesignLevel>& tm30_design_levels() {
    static const std::vector<Tm30DesignLevel> table = [] {
        const CsvTable t = read_csv(embedded_file("targets/tm30_annex_e.csv"), "data/targets/tm30_annex_e.csv");
        const std::size_t name = column(t, "level"), source = column(t, "source");
        auto optional = [&](std::size_t i, const char* col) -> std::optional<double> {
            if (t.rows[i][column(t, col)].empty()) return std::nullopt;
            return number(t, i, col);
        };
        std::vector<Tm30DesignLevel> out;
        for (std::size_t i = 0; i < t.rows.size(); ++i) {
            if (t.rows[i][source].empty()) throw InputError(t.source, t.lines[i], "column 'source' is empty: name the source or say 'from memory'");
            out.push_back({t.rows[i][name], optional(i, "min_rf"), optional(i, "min_rf_h1"), optional(i, "min_rcs_h1"), optional(i, "max_rcs_h1"),
                           optional(i, "min_rg"), t.rows[i][source]});
        }
        return out;
    }();
    return table;
}

const Tm30DesignLevel& tm30_design_level(const std::string& name) {
    std::string key;
    for (char ch : name) key += static_cast<char>(std::toupper(static_cast<unsigned char>(ch)));
    std::string names;
    for (const auto& l : tm30_design_levels()) {
        if (l.name == key) return l;
        names += (names.empty() ? "" : ", ") + l.name;
    }
    throw Error(fmt::format("no TM-30-20 Annex E level '{}'; the levels offered are {} (Vividness levels are not offered)", name, names));
}

Target target_xy(double x, double y) {
    if (!(x > 0 && y > 0 && x + y < 1)) throw Error(fmt::format("chromaticity x = {:g}, y = {:g} is not a colour (need x, y > 0, x + y < 1)", x, y));
    Target t;
    t.kind = Target::Kind::chromaticity;
    t.xy = {x, y};
    t.description = fmt::format("x = {:.4f}, y = {:.4f}", x, y);
    return t;
}

Target target_uv_prime(double u, double v) {
    if (!(u > 0 && v > 0 && u < 0.7 && v < 0.7)) throw Error(fmt::format("u' = {:g}, v' = {:g} is not a colour", u, v));
    const Chromaticity xy = xy_from_uv_1976({u, v});
    Target t = target_xy(xy.x, xy.y);
    t.description = fmt::format("u' = {:.4f}, v' = {:.4f}", u, v);
    return t;
}

Target target_cct(double cct_K, double duv) {
    Target t;
    t.kind = Target::Kind::cct_duv;
    t.xy = xy_from_cct_duv(cct_K, duv);
    t.description = fmt::format("{:g} K, Duv {}", cct_K, format_signed(duv, 4));
    return t;
}

Target target_ansi_c78377(int nominal_K) {
    const AnsiC78377Class& c = ansi_c78377_class(nominal_K);
    Target t;
    t.kind = Target::Kind::ansi_c78377;
    t.xy = c.centre;
    t.ansi_class = c;
    t.description = fmt::format("ANSI C78.377 {} K class centre ({:g} K, Duv {})", c.nominal_K, c.cct_K, format_signed(c.duv_centre, 4));
    return t;
}

Target target_ansi_c78376(const std::string& lamp, double steps) {
    if (!(steps > 0)) throw Error(fmt::format("ellipse size must be a positive number of steps, not {:g}", steps));
    const FluorescentLampColour& c = ansi_c78376_colour(lamp);
    Target t;
    t.kind = Target::Kind::ansi_c78376;
    t.xy = c.ellipse.centre;
    t.ellipse = c.ellipse;
    t.ellipse_steps = steps;
    t.description = fmt::format("ANSI C78.376 {} centre, {:g}-step MacAdam ellipse ({})", c.name, steps, c.source);
    return t;
}

MacAdamEllipse nearest_step_ellipse(const Chromaticity& centre) {
    const auto& colours = ansi_c78376_colours();
    const FluorescentLampColour* best = &colours.front();
    double d_best = 1e300;
    for (const auto& c : colours) {
        const double d = std::hypot(c.ellipse.centre.x - centre.x, c.ellipse.centre.y - centre.y);
        if (d < d_best) d_best = d, best = &c;
    }
    MacAdamEllipse e = best->ellipse;
    e.centre = centre;
    return e;
}

}  // namespace lampwright
