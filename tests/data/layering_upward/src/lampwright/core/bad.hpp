#pragma once
// A fixture for the layering check (cmake/CheckLayering.cmake): core includes report, which lies
// above it, so the check must fail on this tree.
#include "lampwright/report/fine.hpp"
