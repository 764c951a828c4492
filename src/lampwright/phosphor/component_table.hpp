#pragma once
// The [[component]] tables that blend recipes (phosphor/recipe) and LED layer designs
// (led/layer_design) share: the list itself, the phosphor each one names and its quantum
// efficiency, read with the same checks and the same messages (file, line and key).
#include "lampwright/io/toml_access.hpp"
#include "lampwright/phosphor/phosphor.hpp"

#include <cstddef>
#include <optional>
#include <string>

namespace lampwright {

// The document's [[component]] array; fails "no [[component]] given" when it is missing or empty.
const toml::array& component_array(const TomlDoc& doc, const toml::table& root);
// Component i (from 0) as a table, and its key path "component[i+1]" in `where`; fails when it is not a table.
const toml::table& component_table(const TomlDoc& doc, const toml::array& components, std::size_t i, std::string& where);
// The phosphor a component names: 'phosphor' (a library id) or 'spectrum' (a measured emission
// file, relative to the document), exactly one of them; `neither` is the problem when both are missing.
Phosphor component_phosphor(const TomlDoc& doc, const toml::table& c, const std::string& where, const PhosphorLibrary& library,
                            const std::string& neither);
// The component's 'quantum_efficiency', a fraction in (0, 1] (a value in percent is refused), if given.
std::optional<double> component_quantum_efficiency(const TomlDoc& doc, const toml::table& c, const std::string& where);

}  // namespace lampwright
