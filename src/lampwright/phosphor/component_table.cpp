#include "lampwright/phosphor/component_table.hpp"

#include <fmt/format.h>

namespace lampwright {

const toml::array& component_array(const TomlDoc& doc, const toml::table& root) {
    const auto* comps = doc.array(root, "component", "");
    if (!comps || comps->empty()) doc.fail(&root, "", "no [[component]] given");
    return *comps;
}

const toml::table& component_table(const TomlDoc& doc, const toml::array& components, std::size_t i, std::string& where) {
    where = fmt::format("component[{}]", i + 1);
    const auto* c = components.get(i)->as_table();
    if (!c) doc.fail(components.get(i), where, "must be a [[component]] table");
    return *c;
}

Phosphor component_phosphor(const TomlDoc& doc, const toml::table& c, const std::string& where, const PhosphorLibrary& library,
                            const std::string& neither) {
    const auto id = doc.string(c, "phosphor", where);
    const auto spectrum = doc.string(c, "spectrum", where);
    if (id && spectrum) doc.fail(&c, where, "give either 'phosphor' or 'spectrum', not both");
    if (!id && !spectrum) doc.fail(&c, where, neither);
    if (id) {
        try {
            return library.find(*id);
        } catch (const Error& e) {
            doc.fail(c.get("phosphor"), key_path(where, "phosphor"), e.what());
        }
    }
    try {
        return phosphor_from_emission_file(path_relative_to(doc.source(), *spectrum));
    } catch (const InputError& e) {
        doc.fail(c.get("spectrum"), key_path(where, "spectrum"), e.what());
    }
}

std::optional<double> component_quantum_efficiency(const TomlDoc& doc, const toml::table& c, const std::string& where) {
    const auto q = doc.number(c, "quantum_efficiency", where);
    if (q && (*q <= 0 || *q > 1))
        doc.fail(c.get("quantum_efficiency"), key_path(where, "quantum_efficiency"), fmt::format("must be a fraction in (0, 1], not {:g} (percent?)", *q));
    return q;
}

}  // namespace lampwright
