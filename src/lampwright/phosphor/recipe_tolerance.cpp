#include "lampwright/phosphor/recipe_tolerance.hpp"

#include "lampwright/core/error.hpp"

#include <fmt/format.h>

#include <cmath>

namespace lampwright {

const ToleranceSource& tolerance_source(const std::string& key) {
    for (const auto& s : kToleranceSources)
        if (key == s.key) return s;
    throw Error(fmt::format("no source of variation '{}'", key));
}

const std::vector<double>* RecipeTolerance::find(const std::string& key) const {
    for (const auto& [k, v] : values)
        if (k == key) return &v;
    return nullptr;
}

RecipeTolerance recipe_tolerance(const TomlDoc& doc, std::size_t n_components) {
    RecipeTolerance out;
    const toml::table* t = doc.table(doc.root(), "tolerance", "");
    if (!t) return out;
    out.path = doc.source();
    std::vector<std::string> known;
    for (const auto& s : kToleranceSources) known.push_back(s.key);
    known.push_back("weighing_absolute");
    doc.only_keys(*t, known, "tolerance");
    for (const auto& s : kToleranceSources) {
        const toml::node* node = t->get(s.key);
        if (!node) continue;
        const std::string where = std::string("tolerance.") + s.key;
        std::vector<double> v;
        const bool per_component = std::string(s.level) == "batch" && std::string(s.key) != "batch_size";
        if (const auto* arr = node->as_array()) {
            if (!per_component) doc.fail(node, where, "takes one number (it is not given per component)");
            if (arr->size() != n_components)
                doc.fail(node, where, fmt::format("give one value for all components or one per component ({}), not {}", n_components, arr->size()));
            for (const auto& e : *arr) {
                const auto x = e.value<double>();
                if (!x) doc.fail(&e, where, "must be an array of numbers");
                v.push_back(*x);
            }
        } else {
            v.push_back(*doc.number(*t, s.key, "tolerance"));
        }
        for (double x : v) {
            if (!std::isfinite(x) || x < s.min || x > s.max)
                doc.fail(node, where, fmt::format("must lie in [{:g}, {:g}] ({}), not {:g}", s.min, s.max, s.unit, x));
            if (std::string(s.key) == "batch_size" && x != std::floor(x)) doc.fail(node, where, fmt::format("must be a whole number, not {:g}", x));
        }
        out.values.emplace_back(s.key, std::move(v));
    }
    if (const toml::node* node = t->get("weighing_absolute")) {
        const auto b = node->value<bool>();
        if (!b) doc.fail(node, "tolerance.weighing_absolute", "must be true or false");
        out.values.emplace_back("weighing_absolute", std::vector<double>{*b ? 1.0 : 0.0});
    }
    return out;
}


}  // namespace lampwright
