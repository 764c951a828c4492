#pragma once
// Tables that used to be built at every start-up (about 70 ms of Planck sums and CIECAM02
// evaluations) are computed once at build time: the generator tools/generate_tables.cpp calls
// the compute_* functions declared beside each table (temperature.hpp, colour_rendering.hpp,
// colour_fidelity.hpp) and writes their values, exactly (shortest round-trip decimal), into
// generated/precomputed_tables.cpp, which the library links. There is one implementation of each
// table; test_precomputed_tables checks that the generated values equal a fresh computation.
// An empty span means "not generated" (only in the generator's own build): the library then
// computes the table itself, once (computed_unless_generated).
#include <span>
#include <vector>

namespace lampwright::precomputed {

std::span<const double> ohno_planck_table();      // compute_ohno_planck_table()
std::span<const double> robertson_lines();        // compute_robertson_lines()
std::span<const double> cie133_planck_reference();  // compute_cie133_planck_reference_table()
std::span<const double> cie224_reference_jab();   // compute_cie224_reference_jab_table()

// The generated table, or (only where none was generated) the computed one, kept in `store`.
inline std::span<const double> computed_unless_generated(std::span<const double> generated, std::vector<double>& store,
                                                         std::vector<double> (*compute)()) {
    if (!generated.empty()) return generated;
    store = compute();
    return store;
}

}  // namespace lampwright::precomputed
