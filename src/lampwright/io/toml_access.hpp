#pragma once
// Reading TOML documents (recipes, designs, specs, phosphors) with errors that name the file,
// the line and the key. Built on toml++.
#include "lampwright/core/error.hpp"
#include "lampwright/core/text_file.hpp"

#include <toml++/toml.h>

#include <optional>
#include <string>
#include <vector>

namespace lampwright {

class TomlDoc {
public:
    // Parses text; a syntax error becomes InputError(source, line, description).
    TomlDoc(const std::string& text, std::string source);
    static TomlDoc from_file(const std::string& path);

    const toml::table& root() const { return table_; }
    const std::string& source() const { return source_; }

    // `where` is the dotted key path used in messages (e.g. "component[2]").
    [[noreturn]] void fail(const toml::node* node, const std::string& where, const std::string& problem) const;

    std::optional<double> number(const toml::table& t, const std::string& key, const std::string& where) const;
    double require_number(const toml::table& t, const std::string& key, const std::string& where) const;
    std::optional<std::string> string(const toml::table& t, const std::string& key, const std::string& where) const;
    std::string require_string(const toml::table& t, const std::string& key, const std::string& where) const;
    const toml::table* table(const toml::table& t, const std::string& key, const std::string& where) const;
    const toml::array* array(const toml::table& t, const std::string& key, const std::string& where) const;
    std::vector<std::string> strings(const toml::table& t, const std::string& key, const std::string& where) const;
    // An array of [x, y] pairs with x strictly increasing.
    void pairs(const toml::table& t, const std::string& key, const std::string& where, std::vector<double>& x,
               std::vector<double>& y) const;
    std::size_t line_of(const toml::node* node) const;
    // Fails on keys that are not in `known` (catches misspelt keys such as "mass_fracion").
    void only_keys(const toml::table& t, const std::vector<std::string>& known, const std::string& where) const;

private:
    toml::table table_;
    std::string source_;
};

// A TOML basic string, quoted, with quote, backslash and control characters escaped.
std::string toml_quote(const std::string& s);

// A path written in a file, resolved against that file's folder (absolute paths unchanged).
std::string path_relative_to(const std::string& base_file, const std::string& path);

std::string key_path(const std::string& where, const std::string& key);

}  // namespace lampwright
