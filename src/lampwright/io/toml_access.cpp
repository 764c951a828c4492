#include "lampwright/io/toml_access.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>

namespace lampwright {

std::string toml_quote(const std::string& s) {
    std::string o = "\"";
    for (char ch : s) {
        const auto u = static_cast<unsigned char>(ch);
        if (ch == '"' || ch == '\\') o += '\\';
        if (ch == '\n') o += "\\n";
        else if (ch == '\r') o += "\\r";
        else if (ch == '\t') o += "\\t";
        else if (u < 0x20 || u == 0x7f) o += fmt::format("\\u{:04X}", static_cast<unsigned>(u));
        else o += ch;
    }
    return o + "\"";
}

std::string path_relative_to(const std::string& base_file, const std::string& path) {
    const std::filesystem::path p(path);
    return p.is_absolute() ? path : (std::filesystem::path(base_file).parent_path() / p).string();
}

std::string key_path(const std::string& where, const std::string& key) { return where.empty() ? key : where + "." + key; }

namespace {

// toml++ parses and destroys nested tables and arrays by recursion, so a file such as
// [a.a.a....] with 50,000 levels, or x = [[[[...]]]], overflows the stack. No recipe, spec,
// phosphor or layer file needs more than a handful of levels, so text nested deeper than this is
// refused before toml++ sees it (limit: common practice, no source).
constexpr std::size_t kMaxTomlNesting = 64;

[[noreturn]] void too_deep(const std::string& source, std::size_t line) {
    throw InputError(source, line, fmt::format("nested deeper than {} levels (tables, dotted keys, arrays or inline tables); no lampwright file needs that many",
                                               kMaxTomlNesting));
}

// Scans the text as TOML (strings, comments, table headers, keys, values) and counts how deep
// each table header, dotted key, array and inline table lies; fails at the first one deeper than
// kMaxTomlNesting. Syntax errors are left for toml++ to report.
void check_toml_nesting(const std::string& text, const std::string& source) {
    const std::size_t n = text.size();
    std::size_t i = 0, line = 1;
    std::size_t header_depth = 0;      // levels of the current [table] header
    std::vector<std::size_t> open;     // depth of each open '[' or '{' in a value
    std::vector<char> kinds;           // '[' or '{'
    bool in_key = true;                // reading a key (else a value)
    bool line_start = true;            // at the start of a top-level statement
    std::size_t key_parts = 1;         // parts of the dotted key being read
    auto base = [&] { return open.empty() ? header_depth : open.back(); };
    auto check = [&](std::size_t depth) {
        if (depth > kMaxTomlNesting) too_deep(source, line);
    };
    // Skips a string starting at text[i] (a quote); counts the newlines of multi-line strings.
    auto skip_string = [&] {
        const char q = text[i];
        const bool multi = text.compare(i, 3, std::string(3, q)) == 0;
        i += multi ? 3 : 1;
        while (i < n) {
            const char c = text[i];
            if (c == '\\' && q == '"') {
                if (i + 1 < n && text[i + 1] == '\n') ++line;
                i += 2;
                continue;
            }
            if (c == '\n') {
                ++line;
                if (!multi) return;  // unterminated: toml++ reports it
            }
            if (c == q && (!multi || text.compare(i, 3, std::string(3, q)) == 0)) {
                i += multi ? 3 : 1;
                while (multi && i < n && text[i] == q) ++i;  // up to two quotes may end the content
                return;
            }
            ++i;
        }
    };
    while (i < n) {
        const char c = text[i];
        if (c == '"' || c == '\'') {
            skip_string();
            line_start = false;
            continue;
        }
        if (c == '#') {
            while (i < n && text[i] != '\n') ++i;
            continue;
        }
        if (c == '\n') {
            ++line;
            ++i;
            if (open.empty()) {
                line_start = true;
                in_key = true;
                key_parts = 1;
            }
            continue;
        }
        if (c == ' ' || c == '\t' || c == '\r') {
            ++i;
            continue;
        }
        if (line_start && c == '[') {
            // A [table] or [[array of tables]] header: one level per dotted part.
            std::size_t parts = 1;
            ++i;
            while (i < n && text[i] != ']' && text[i] != '\n') {
                if (text[i] == '"' || text[i] == '\'') {
                    skip_string();
                    continue;
                }
                if (text[i] == '.') check(++parts);
                ++i;
            }
            header_depth = parts;
            line_start = false;
            in_key = false;  // the rest of the line holds at most "]" and a comment
            continue;
        }
        line_start = false;
        if (in_key) {
            if (c == '.') check(base() + key_parts++);  // each dot opens one more table
            else if (c == '=') in_key = false;
            else if (c == '}' && !kinds.empty() && kinds.back() == '{') {  // empty inline table "{}"
                open.pop_back();
                kinds.pop_back();
                in_key = false;
            }
            ++i;
            continue;
        }
        if (c == '[' || c == '{') {
            // A value of a key with k parts in a table at depth d lies at d + k; an element of an array one deeper.
            const std::size_t depth = kinds.empty() || kinds.back() == '{' ? base() + key_parts : base() + 1;
            check(depth);
            open.push_back(depth);
            kinds.push_back(c);
            in_key = c == '{';
            key_parts = 1;
        } else if ((c == ']' || c == '}') && !kinds.empty()) {
            open.pop_back();
            kinds.pop_back();
        } else if (c == ',' && !kinds.empty() && kinds.back() == '{') {
            in_key = true;
            key_parts = 1;
        }
        ++i;
    }
}

}  // namespace

TomlDoc::TomlDoc(const std::string& text, std::string source) : source_(std::move(source)) {
    check_toml_nesting(text, source_);
    try {
        table_ = toml::parse(text, source_);
    } catch (const toml::parse_error& e) {
        throw InputError(source_, e.source().begin.line, fmt::format("TOML syntax: {}", e.description()));
    }
}


TomlDoc TomlDoc::from_file(const std::string& path) { return TomlDoc(read_text_file(path), path); }

std::size_t TomlDoc::line_of(const toml::node* node) const { return node ? node->source().begin.line : 0; }

void TomlDoc::fail(const toml::node* node, const std::string& where, const std::string& problem) const {
    throw InputError(source_, line_of(node), where.empty() ? problem : fmt::format("'{}': {}", where, problem));
}

std::optional<double> TomlDoc::number(const toml::table& t, const std::string& key, const std::string& where) const {
    const toml::node* n = t.get(key);
    if (!n) return std::nullopt;
    std::optional<double> v;
    if (auto d = n->as_floating_point()) v = d->get();
    else if (auto i = n->as_integer()) v = static_cast<double>(i->get());
    else fail(n, key_path(where, key), fmt::format("must be a number, not {}", n->is_string() ? "text \"" + std::string(n->as_string()->get()) + "\"" : "this value"));
    if (!std::isfinite(*v)) fail(n, key_path(where, key), "must be a finite number");
    return v;
}

double TomlDoc::require_number(const toml::table& t, const std::string& key, const std::string& where) const {
    auto v = number(t, key, where);
    if (!v) fail(&t, where, fmt::format("missing key '{}'", key));
    return *v;
}

std::optional<std::string> TomlDoc::string(const toml::table& t, const std::string& key, const std::string& where) const {
    const toml::node* n = t.get(key);
    if (!n) return std::nullopt;
    if (!n->is_string()) fail(n, key_path(where, key), "must be text in quotes");
    return std::string(n->as_string()->get());
}

std::string TomlDoc::require_string(const toml::table& t, const std::string& key, const std::string& where) const {
    auto v = string(t, key, where);
    if (!v) fail(&t, where, fmt::format("missing key '{}'", key));
    return *v;
}

const toml::table* TomlDoc::table(const toml::table& t, const std::string& key, const std::string& where) const {
    const toml::node* n = t.get(key);
    if (!n) return nullptr;
    if (!n->is_table()) fail(n, key_path(where, key), "must be a table ([" + key + "])");
    return n->as_table();
}

const toml::array* TomlDoc::array(const toml::table& t, const std::string& key, const std::string& where) const {
    const toml::node* n = t.get(key);
    if (!n) return nullptr;
    if (!n->is_array()) fail(n, key_path(where, key), "must be an array [ ... ]");
    return n->as_array();
}

std::vector<std::string> TomlDoc::strings(const toml::table& t, const std::string& key, const std::string& where) const {
    std::vector<std::string> out;
    if (const auto* a = array(t, key, where))
        for (const auto& e : *a) {
            if (!e.is_string()) fail(&e, key_path(where, key), "must hold text items");
            out.emplace_back(e.as_string()->get());
        }
    return out;
}

void TomlDoc::pairs(const toml::table& t, const std::string& key, const std::string& where, std::vector<double>& x,
                    std::vector<double>& y) const {
    const auto* a = array(t, key, where);
    if (!a) fail(&t, where, fmt::format("missing key '{}'", key));
    x.clear();
    y.clear();
    for (const auto& e : *a) {
        const auto* p = e.as_array();
        auto num = [&](const toml::node* n) -> std::optional<double> {
            if (!n) return std::nullopt;
            if (auto d = n->as_floating_point()) return d->get();
            if (auto i = n->as_integer()) return static_cast<double>(i->get());
            return std::nullopt;
        };
        if (!p || p->size() != 2 || !num(p->get(0)) || !num(p->get(1)))
            fail(&e, key_path(where, key), "items must be [number, number] pairs");
        const double xv = *num(p->get(0)), yv = *num(p->get(1));
        if (!std::isfinite(xv) || !std::isfinite(yv)) fail(&e, key_path(where, key), "items must be finite");
        if (!x.empty() && xv <= x.back())
            fail(&e, key_path(where, key), fmt::format("first values must increase ({} after {})", xv, x.back()));
        x.push_back(xv);
        y.push_back(yv);
    }
    if (x.empty()) fail(a, key_path(where, key), "is empty");
}

void TomlDoc::only_keys(const toml::table& t, const std::vector<std::string>& known, const std::string& where) const {
    for (const auto& [k, v] : t) {
        const std::string key(k.str());
        if (std::find(known.begin(), known.end(), key) == known.end()) {
            std::string list;
            for (const auto& s : known) list += (list.empty() ? "" : ", ") + s;
            fail(&v, key_path(where, key), fmt::format("unknown key (known here: {})", list));
        }
    }
}

}  // namespace lampwright
