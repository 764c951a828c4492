#include "lampwright/io/spectrum_io.hpp"

#include "lampwright/core/error.hpp"
#include "lampwright/core/interpolation.hpp"
#include "lampwright/core/text_file.hpp"
#include "lampwright/core/text_encoding.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <charconv>
#include <iterator>
#include <string_view>
#include <unordered_map>
#include <cerrno>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <istream>
#include <cstring>
#include <optional>
#include <ostream>
#include <ranges>
#include <sstream>

#include <pugixml.hpp>

namespace lampwright {

namespace {

std::string_view trim_view(std::string_view s) {
    const auto b = s.find_first_not_of(" \t\r\n\v\f");
    if (b == std::string_view::npos) return {};
    const auto e = s.find_last_not_of(" \t\r\n\v\f");
    return s.substr(b, e - b + 1);
}

std::string trim(std::string_view s) { return std::string(trim_view(s)); }

enum class Separator { comma, semicolon, tab, space };

Separator detect_separator(std::string_view line) {
    if (line.find(';') != std::string::npos) return Separator::semicolon;
    if (line.find('\t') != std::string::npos) return Separator::tab;  // before ',' so "380<TAB>0,12" reads as a decimal comma
    if (line.find(',') != std::string::npos) return Separator::comma;
    return Separator::space;
}

// The fields of one line as views into it (no copy); `out` is reused from line to line.
void split_views(std::string_view line, Separator sep, std::vector<std::string_view>& out) {
    out.clear();
    if (sep == Separator::space) {
        std::size_t i = 0;
        while (i < line.size()) {
            while (i < line.size() && std::isspace(static_cast<unsigned char>(line[i]))) ++i;
            if (i >= line.size()) break;
            std::size_t j = i;
            while (j < line.size() && !std::isspace(static_cast<unsigned char>(line[j]))) ++j;
            out.push_back(line.substr(i, j - i));
            i = j;
        }
        return;
    }
    const char c = sep == Separator::comma ? ',' : (sep == Separator::semicolon ? ';' : '\t');
    std::size_t start = 0;
    while (true) {
        const auto pos = line.find(c, start);
        out.push_back(trim_view(line.substr(start, pos == std::string_view::npos ? std::string_view::npos : pos - start)));
        if (pos == std::string_view::npos) break;
        start = pos + 1;
    }
    // A trailing separator at the end of a row is common in spreadsheet exports.
    if (out.size() > 1 && out.back().empty()) out.pop_back();
}

std::vector<std::string> split(const std::string& line, Separator sep) {
    std::vector<std::string_view> views;
    split_views(line, sep, views);
    return {views.begin(), views.end()};
}

// Parses a whole field as a number; nullopt when it is not one. NaN/Inf are reported separately.
// Fast path: std::from_chars on the view (plain decimal, the common case); anything it does not
// take whole (a leading '+', hexadecimal, out of range, "inf", a decimal comma) goes to strtod,
// which keeps the reader's accepted forms unchanged.
std::optional<double> parse_number(std::string_view field, bool decimal_comma) {
    if (field.empty()) return std::nullopt;
    if (!decimal_comma || field.find(',') == std::string_view::npos) {
        double v = 0;
        const auto [end, ec] = std::from_chars(field.data(), field.data() + field.size(), v);
        if (ec == std::errc() && end == field.data() + field.size()) return v;
    }
    std::string copy(field);
    if (decimal_comma) std::replace(copy.begin(), copy.end(), ',', '.');
    const char* begin = copy.c_str();
    char* end = nullptr;
    errno = 0;
    const double v = std::strtod(begin, &end);
    if (end == begin || *end != '\0') return std::nullopt;
    return v;
}

bool looks_non_finite(std::string_view field) {
    std::string f(field);
    std::transform(f.begin(), f.end(), f.begin(), [](unsigned char ch) { return std::tolower(ch); });
    if (!f.empty() && (f[0] == '+' || f[0] == '-')) f.erase(0, 1);
    return f == "nan" || f == "inf" || f == "infinity";
}

// Checks shared by every format: wavelength unit and range, then per spectrum a positive value
// and negative noise. columns[0] holds the wavelengths; lines[i] the source line of row i.
// Sampling wider than this inside 380-780 nm is interpolated over more than the narrowest lamp
// features (mercury and rare-earth lines are ~1-2 nm wide; CIE 15:2004 7.1 recommends 5 nm steps,
// 10 nm being the common coarse instrument grid): a wider step usually means missing rows.
constexpr double kLargestUsualStepNm = 10.0;

// A warning when the table jumps over part of the visible range (say 450-520 nm missing): a step
// above 10 nm and above twice the table's median step. A uniformly coarse table is not a gap.
void warn_about_gaps(SpectrumFile& result, const std::string& source, const std::vector<double>& wl, const std::vector<std::size_t>& lines) {
    std::size_t worst = 0;
    double worst_step = 0;
    std::vector<double> steps;
    for (std::size_t i = 1; i < wl.size(); ++i) {
        if (wl[i] <= 380.0 || wl[i - 1] >= 780.0) continue;
        steps.push_back(wl[i] - wl[i - 1]);
        if (wl[i] - wl[i - 1] > worst_step) {
            worst_step = wl[i] - wl[i - 1];
            worst = i;
        }
    }
    if (steps.empty()) return;
    std::nth_element(steps.begin(), steps.begin() + static_cast<std::ptrdiff_t>(steps.size() / 2), steps.end());
    const double median_step = steps[steps.size() / 2];
    if (worst_step > kLargestUsualStepNm + 1e-9 && worst_step > 2.0 * median_step + 1e-9)
        result.warnings.push_back(fmt::format("{}:{}: no data from {:g} to {:g} nm (a {:g} nm step; the usual largest is {:g} nm): the values in between "
                                              "are interpolated and the figures may be wrong",
                                              source, lines[worst], wl[worst - 1], wl[worst], worst_step, kLargestUsualStepNm));
}

// A spectrum file's declared radiometry: the unit (and the line declaring it) and power values.
struct Radiometry {
    std::optional<std::string> unit;
    std::size_t unit_line = 0;
    std::vector<double> power_W;
    std::size_t power_line = 0;
};

// "# units: W/nm" or "# power_W = 12.5, 13": the key (lower case) and value; nullopt for any
// other comment.
std::optional<std::pair<std::string, std::string>> header_directive(const std::string& comment) {
    const auto sep = comment.find_first_of(":=");
    if (sep == std::string::npos) return std::nullopt;
    std::string key = trim(std::string_view(comment).substr(0, sep));
    std::transform(key.begin(), key.end(), key.begin(), [](unsigned char ch) { return static_cast<char>(std::tolower(ch)); });
    if (key != "units" && key != "power_w") return std::nullopt;
    return std::make_pair(key, trim(std::string_view(comment).substr(sep + 1)));
}

// Applies the unit (the file's, else the options') and the powers to the validated spectra.
void apply_radiometry(SpectrumFile& f, const std::string& source, const Radiometry& r, const SpectrumReadOptions& options) {
    double factor = 0;
    if (r.unit) {
        const auto k = spectral_unit_to_W_per_nm(*r.unit);
        if (!k) throw InputError(source, r.unit_line, fmt::format("units '{}' not understood: give {}", *r.unit, kSpectralUnitsAccepted));
        factor = *k;
        if (!options.units.empty()) {
            const auto given = spectral_unit_to_W_per_nm(options.units);
            if (given && *given != factor)
                throw InputError(source, r.unit_line, fmt::format("the file declares units {} but --units says {}; remove one", *r.unit, options.units));
        }
    } else if (!options.units.empty()) {
        const auto given = spectral_unit_to_W_per_nm(options.units);
        if (!given) throw InputError(source, 0, fmt::format("units '{}' not understood: give {}", options.units, kSpectralUnitsAccepted));
        factor = *given;
    }
    if (!r.power_W.empty() && r.power_W.size() != 1 && r.power_W.size() != f.spectra.size())
        throw InputError(source, r.power_line, fmt::format("power_W gives {} values for {} spectra: give one for all, or one per spectrum column", r.power_W.size(),
                                                           f.spectra.size()));
    for (std::size_t i = 0; i < f.spectra.size(); ++i) {
        auto& s = f.spectra[i];
        if (factor > 0) {
            s.absolute = true;
            for (auto& v : s.values) v *= factor;
        }
        if (!r.power_W.empty())
            s.electrical_power_W = r.power_W.size() == 1 ? r.power_W[0] : r.power_W[i];
        else
            s.electrical_power_W = options.power_W;
    }
}

SpectrumFile validated_spectra(const std::string& source, const std::vector<std::string>& names, std::vector<std::vector<double>>& columns,
                               const std::vector<std::size_t>& value_lines, const SpectrumReadOptions& options) {
    const auto& wl = columns[0];
    // Every wavelength must be physical before anything is resampled: the 1 nm grid runs from the
    // first to the last wavelength, so 1e9 nm would mean a billion grid points. 100 nm (far UV) to
    // 100,000 nm (far infrared) holds every source and measurement this program deals with
    // (common practice, no source).
    for (std::size_t i = 0; i < wl.size(); ++i)
        if (!(wl[i] >= kMinWavelengthNm && wl[i] <= kMaxWavelengthNm))
            throw InputError(source, value_lines[i], fmt::format("wavelength {:g} nm is outside {:g}-{:g} nm; the first column must be the wavelength in nm",
                                                                 wl[i], kMinWavelengthNm, kMaxWavelengthNm));
    if (options.check_range && (wl.front() > options.min_required_nm + 1e-9 || wl.back() < options.max_required_nm - 1e-9))
        throw InputError(source, 0, fmt::format("covers {:g}-{:g} nm; at least {:g}-{:g} nm is needed for colorimetry (CIE 15:2004)",
                                                wl.front(), wl.back(), options.min_required_nm, options.max_required_nm));

    SpectrumFile result;
    warn_about_gaps(result, source, wl, value_lines);
    for (std::size_t c = 1; c < columns.size(); ++c) {
        SampledSpectrum s;
        s.name = sanitize_utf8(names[c - 1]);  // also the file's stem, which may be in any encoding
        s.wavelengths_nm = wl;
        s.values = std::move(columns[c]);
        const double peak = *std::max_element(s.values.begin(), s.values.end());
        if (options.allow_negative) {
            result.spectra.push_back(std::move(s));
            continue;
        }
        if (!(peak > 0.0)) throw InputError(source, 0, fmt::format("spectrum '{}' has no positive value", s.name));
        std::size_t clipped = 0;
        for (std::size_t i = 0; i < s.values.size(); ++i) {
            if (s.values[i] >= 0.0) continue;
            if (-s.values[i] > options.negative_noise_fraction * peak)
                throw InputError(source, value_lines[i], fmt::format("spectrum '{}' has value {:g} at {:g} nm, negative beyond noise ({:g} % of its peak)",
                                                                     s.name, s.values[i], wl[i], options.negative_noise_fraction * 100));
            s.values[i] = 0.0;
            ++clipped;
        }
        if (clipped > 0)
            result.warnings.push_back(fmt::format("{}: spectrum '{}': {} small negative value(s) (noise) set to zero", source, s.name, clipped));
        result.spectra.push_back(std::move(s));
    }
    for (auto& w : result.warnings) w = sanitize_utf8(w);  // they name the file
    return result;
}

}  // namespace

std::optional<double> spectral_unit_to_W_per_nm(const std::string& unit) {
    if (unit == "W/nm") return 1.0;
    if (unit == "mW/nm") return 1e-3;
    if (unit == "uW/nm" || unit == "\xC2\xB5W/nm" || unit == "\xCE\xBCW/nm") return 1e-6;  // micro sign or Greek mu
    if (unit == "relative") return 0.0;
    return std::nullopt;
}

std::string file_stem(const std::string& path) { return std::filesystem::path(path).stem().string(); }

// One pass over the file's bytes: lines and fields are views into the buffer, numbers are parsed
// in place; nothing is copied per line or per field except header names and messages.
SpectrumFile parse_spectrum_text(std::string_view text, const std::string& source, const std::string& stem,
                                 const SpectrumReadOptions& options) {
    std::vector<std::string> names;
    std::vector<std::vector<double>> columns;  // [0] wavelengths
    std::vector<std::size_t> value_lines;       // file line of each row
    std::optional<Separator> sep;
    std::size_t ncols = 0;
    bool header_seen = false;

    Radiometry radiometry;

    std::vector<std::string_view> fields;
    std::size_t line_no = 0, pos = 0;
    // Lines as std::getline gives them: split at '\n', a last line without one included.
    while (pos < text.size()) {
        const std::size_t nl = text.find('\n', pos);
        std::string_view raw = text.substr(pos, nl == std::string_view::npos ? std::string_view::npos : nl - pos);
        pos = nl == std::string_view::npos ? text.size() : nl + 1;
        ++line_no;
        if (line_no == 1 && raw.size() >= 3 && raw.substr(0, 3) == "\xEF\xBB\xBF") raw.remove_prefix(3);
        if (const std::string_view full = trim_view(raw); !full.empty() && full[0] == '#') {
            if (const auto d = header_directive(std::string(full.substr(1)))) {
                if (d->first == "units") {
                    if (radiometry.unit)
                        throw InputError(source, line_no, fmt::format("units declared twice (first on line {})", radiometry.unit_line));
                    if (!spectral_unit_to_W_per_nm(d->second))
                        throw InputError(source, line_no, fmt::format("units '{}' not understood: give {}", d->second, kSpectralUnitsAccepted));
                    radiometry.unit = d->second;
                    radiometry.unit_line = line_no;
                } else {
                    if (!radiometry.power_W.empty())
                        throw InputError(source, line_no, fmt::format("power_W given twice (first on line {})", radiometry.power_line));
                    std::string list = d->second;
                    std::replace(list.begin(), list.end(), ',', ' ');
                    std::replace(list.begin(), list.end(), ';', ' ');
                    for (const auto& field : split(list, Separator::space)) {
                        const auto w = parse_number(field, false);
                        if (!w || !std::isfinite(*w) || !(*w > 0))
                            throw InputError(source, line_no, fmt::format("power_W value '{}' is not a positive number of watts", field));
                        radiometry.power_W.push_back(*w);
                    }
                    if (radiometry.power_W.empty()) throw InputError(source, line_no, "power_W gives no value");
                    radiometry.power_line = line_no;
                }
            }
            continue;
        }
        if (const auto hash = raw.find('#'); hash != std::string_view::npos) raw = raw.substr(0, hash);
        const std::string_view line = trim_view(raw);
        if (line.empty()) continue;
        if (!sep) sep = detect_separator(line);
        const bool decimal_comma = *sep != Separator::comma;  // "0,123" is a decimal comma unless commas separate
        split_views(line, *sep, fields);
        if (fields.size() < 2)
            throw InputError(source, line_no, fmt::format("expected at least two columns (wavelength_nm and a value), found {}", fields.size()));

        if (!header_seen && columns.empty() && !parse_number(fields[0], decimal_comma) && !looks_non_finite(fields[0])) {
            header_seen = true;
            ncols = fields.size();
            std::unordered_map<std::string, std::size_t> column_of;  // name -> column (1-based), for duplicates
            for (std::size_t i = 1; i < fields.size(); ++i) {
                // A name in another encoding (a Latin-1 "\xB5W") is kept, its bad bytes shown as U+FFFD.
                std::string name = sanitize_utf8(std::string(fields[i]));
                if (name.empty()) throw InputError(source, line_no, fmt::format("header column {} has no name", i + 1));
                // Each column is one lamp, known by its name (qc stores lamps by name): two columns
                // of one name would be two lamps judged but one stored.
                if (const auto [it, fresh] = column_of.emplace(name, i + 1); !fresh)
                    throw InputError(source, line_no, fmt::format("spectrum name '{}' is used by columns {} and {}; give each column its own name", name,
                                                                  it->second, i + 1));
                names.push_back(std::move(name));
            }
            continue;
        }
        if (ncols == 0) ncols = fields.size();
        if (fields.size() != ncols)
            throw InputError(source, line_no, fmt::format("row has {} columns, expected {}", fields.size(), ncols));
        if (columns.empty()) columns.resize(ncols);
        for (std::size_t c = 0; c < ncols; ++c) {
            const auto v = parse_number(fields[c], decimal_comma);
            if (!v || !std::isfinite(*v)) {
                const bool non_finite = (v && !std::isfinite(*v)) || looks_non_finite(fields[c]);
                throw InputError(source, line_no, fmt::format("column {} is '{}', not {}", c + 1, sanitize_utf8(std::string(fields[c])),
                                                              non_finite ? "a finite number" : "a number"));
            }
            columns[c].push_back(*v);
        }
        const auto& wl = columns[0];
        if (wl.back() <= 0.0) throw InputError(source, line_no, fmt::format("wavelength {} nm is not positive", wl.back()));
        if (wl.size() >= 2 && wl[wl.size() - 1] <= wl[wl.size() - 2])
            throw InputError(source, line_no, fmt::format("wavelength {} nm does not increase (previous row {} nm); wavelengths must be strictly increasing",
                                                          wl[wl.size() - 1], wl[wl.size() - 2]));
        value_lines.push_back(line_no);
    }
    if (columns.empty() || columns[0].size() < 2) throw InputError(source, 0, "holds no spectral data (need rows of wavelength_nm,value)");

    std::vector<std::string> column_names;
    for (std::size_t c = 1; c < columns.size(); ++c)
        column_names.push_back(columns.size() == 2 ? stem : (header_seen ? names[c - 1] : fmt::format("{}:{}", stem, c + 1)));
    SpectrumFile result = validated_spectra(source, column_names, columns, value_lines, options);
    apply_radiometry(result, source, radiometry, options);
    return result;
}

SpectrumFile parse_spectrum_text(std::istream& in, const std::string& source, const std::string& stem, const SpectrumReadOptions& options) {
    std::string bytes((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    if (in.bad()) throw InputError(source, 0, "could not be read");
    return parse_spectrum_text(std::string_view(bytes), source, stem, options);
}

SpectrumFile parse_tm27_xml(const std::string& bytes, const std::string& source, const std::string& stem, const SpectrumReadOptions& options) {
    pugi::xml_document doc;
    const pugi::xml_parse_result ok = doc.load_buffer(bytes.data(), bytes.size());
    // Offsets of the line starts, found once: the line of each element is then a binary search
    // (counting newlines from the start of the file for every element made reading quadratic).
    std::vector<std::ptrdiff_t> line_starts{0};
    for (std::size_t k = 0; k < bytes.size(); ++k)
        if (bytes[k] == '\n') line_starts.push_back(static_cast<std::ptrdiff_t>(k + 1));
    auto line_at = [&](std::ptrdiff_t offset) {
        return static_cast<std::size_t>(std::upper_bound(line_starts.begin(), line_starts.end(), std::max<std::ptrdiff_t>(offset, 0)) - line_starts.begin());
    };
    if (!ok) throw InputError(source, line_at(ok.offset), fmt::format("XML: {}", ok.description()));
    auto local = [](const char* name) {
        const char* colon = std::strrchr(name, ':');
        return std::string(colon ? colon + 1 : name);
    };
    if (local(doc.document_element().name()) != "IESTM2714")
        throw InputError(source, 1, fmt::format("XML root is <{}>, not an IES TM-27 <IESTM2714> document", doc.document_element().name()));
    std::vector<std::vector<double>> columns(2);
    std::vector<std::size_t> lines;
    for (pugi::xml_node n : doc.select_nodes("//*[local-name()='SpectralData']") | std::views::transform([](const pugi::xpath_node& x) { return x.node(); })) {
        const std::size_t line = line_at(n.offset_debug());
        const char* wl_text = n.attribute("wavelength").value();
        const std::string value_text = trim(n.child_value());
        const auto wl = parse_number(wl_text, false);
        const auto v = parse_number(value_text, false);
        if (!wl || !std::isfinite(*wl)) throw InputError(source, line, fmt::format("SpectralData wavelength '{}' is not a finite number", wl_text));
        if (!v || !std::isfinite(*v) || looks_non_finite(value_text)) throw InputError(source, line, fmt::format("SpectralData value '{}' is not a finite number", value_text));
        if (!columns[0].empty() && *wl <= columns[0].back())
            throw InputError(source, line, fmt::format("wavelength {} nm does not increase (previous {} nm); wavelengths must be strictly increasing", *wl, columns[0].back()));
        columns[0].push_back(*wl);
        columns[1].push_back(*v);
        lines.push_back(line);
    }
    if (columns[0].size() < 2) throw InputError(source, 0, "IES TM-27 document holds no <SpectralData wavelength=\"...\"> elements");
    (void)local;
    SpectrumFile result = validated_spectra(source, {stem}, columns, lines, options);
    // <SpectralQuantity> (IES TM-27-14): what the values are. Only a spectral radiant flux has
    // a luminous flux in lm; TM-27-14 gives no unit, so flux is W/nm unless --units says mW/nm
    // or uW/nm.
    Radiometry radiometry;
    if (const pugi::xpath_node q = doc.select_node("//*[local-name()='SpectralQuantity']")) {
        std::string quantity = trim(q.node().child_value());
        std::transform(quantity.begin(), quantity.end(), quantity.begin(), [](unsigned char ch) { return static_cast<char>(std::tolower(ch)); });
        const std::size_t line = line_at(q.node().offset_debug());
        const auto given = options.units.empty() ? std::optional<double>(0.0) : spectral_unit_to_W_per_nm(options.units);
        if (quantity == "flux") {
            if (given && *given == 0.0 && !options.units.empty())
                throw InputError(source, line, "SpectralQuantity is flux (absolute) but --units says relative; remove one");
            radiometry.unit = options.units.empty() || (given && *given == 0.0) ? std::string("W/nm") : options.units;
        } else {
            if (given && *given > 0.0)
                throw InputError(source, line, fmt::format("SpectralQuantity is '{}', not flux, but --units says {}: no luminous flux in lm can come from it",
                                                           quantity, options.units));
            if (quantity != "relative")
                result.warnings.push_back(fmt::format("{}:{}: SpectralQuantity '{}' is not a spectral radiant flux: read as relative, no luminous flux", source,
                                                      line, quantity));
            radiometry.unit = "relative";
        }
        radiometry.unit_line = line;
    }
    SpectrumReadOptions xml_options = options;
    if (radiometry.unit) xml_options.units.clear();  // the document has decided (checked above)
    apply_radiometry(result, source, radiometry, xml_options);
    return result;
}

SpectrumFile parse_spectrum_bytes(const std::string& bytes, const std::string& source, const SpectrumReadOptions& options) {
    const auto first = bytes.find_first_not_of(" \t\r\n\xEF\xBB\xBF");
    if (first != std::string::npos && bytes[first] == '<') return parse_tm27_xml(bytes, source, file_stem(source), options);
    return parse_spectrum_text(std::string_view(bytes), source, file_stem(source), options);
}

SpectrumFile read_spectrum_file(const std::string& path, const SpectrumReadOptions& options) {
    return parse_spectrum_bytes(read_text_file(path), path, options);
}

Spectrum read_single_spectrum(const std::string& path) {
    SpectrumReadOptions opt;
    opt.check_range = false;
    SpectrumFile f = read_spectrum_file(path, opt);
    if (f.spectra.size() != 1)
        throw InputError(path, 0, fmt::format("must hold one spectrum (two columns), not {}", f.spectra.size()));
    return resample_to_1nm(std::move(f.spectra.front()));
}

void write_spectrum_csv(std::ostream& out, const Spectrum& s, const std::string& column) {
    out << "wavelength_nm," << column << '\n';
    for (std::size_t i = 0; i < s.values.size(); ++i)
        out << fmt::format("{},{:.8g}\n", s.first_nm + static_cast<int>(i), s.values[i]);
}

}  // namespace lampwright
