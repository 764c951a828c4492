#pragma once
// A fixture for the layering check: report may include core.
#include "lampwright/core/bad.hpp"
