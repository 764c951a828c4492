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

TomlDoc::TomlDoc(const std::string& text, std::string source) : source_(std::move(source)) {
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
