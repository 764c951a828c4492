#pragma once
// Sample statistics used by QC, lot history and the tolerance run: one definition of each.
#include <vector>

namespace lampwright {

// Arithmetic mean; NaN for no values.
double mean(const std::vector<double>& v);
// Sample standard deviation (n - 1 in the denominator); NaN for fewer than two values.
double sample_sd(const std::vector<double>& v);
// Quantile of SORTED values, linear between order statistics (Hyndman and Fan 1996, type 7);
// quantile(v, 0.5) is the usual median. NaN for no values.
double quantile_sorted(const std::vector<double>& sorted, double p);
// Median of values in any order.
double median(std::vector<double> v);

}  // namespace lampwright
