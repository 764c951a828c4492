#pragma once
// The JSON documents and drawings of the local formulation page (lampwright serve, docs/serve-api.md).
// The blend figures are blend_document_json (the same object as `blend --format json`); this file
// adds what the page draws: the spectrum with its component stack, the u'v' diagram zoomed on the
// target with the locus, isotherms and the tolerance region, the target's figures and the lists
// the page chooses from. Every number shown on the page comes from here; the page computes none.
#include "lampwright/design/optimiser.hpp"
#include "lampwright/design/targets.hpp"
#include "lampwright/led/layer.hpp"
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/phosphor/phosphor.hpp"

#include <nlohmann/json.hpp>

#include <string>
#include <vector>

namespace lampwright {

// The light of a blend split by component (each phosphor's part of the spectrum) plus the mercury
// lines or the leaked pump, stacked, with the total as a line: an SVG chart in W/nm per W absorbed.
std::string blend_stack_svg(const BlendInput& in, const BlendResult& r);
// The same for an LED layer at its operating temperature: converted light and leaked pump (W/nm).
std::string layer_stack_svg(const LayerEvaluation& e);

// The CIE 1976 u'v' diagram around the target: spectrum and Planckian locus with CCT ticks,
// isotherms (Duv -0.02 to +0.02) at round temperatures, the target's tolerance region (the MacAdam
// ellipse, the ANSI quadrangle or the u'v' circle of `tolerance_uv_prime`), the target and the blend.
std::string target_uv_svg(const Target& t, double tolerance_uv_prime, const Assessment& blend);

// The target and where the blend lies against it: description, aim x, y, u', v', the distance in
// u'v', in MacAdam steps (with an ellipse), inside the ANSI quadrangle (ANSI targets), whether the
// fit's chromaticity constraint holds ("within_tolerance").
nlohmann::ordered_json target_json(const Target& t, double tolerance_uv_prime, const Assessment& blend);

// The targets the page offers: ANSI C78.377 classes, ANSI C78.376 lamp colours with their ellipses,
// the fit objectives.
nlohmann::ordered_json targets_catalogue_json();

// One evaluation of the page: {"blend": blend_document_json, "target": target_json,
// "charts": {"spectrum_svg", "uv_svg", "cvg_svg"}}.
nlohmann::ordered_json serve_evaluation_json(const BlendInput& in, const BlendResult& r, const Target& t, double tolerance_uv_prime);
// An LED layer design: {"layer": layer_document_json (as `layer --format json`), "target" (at the
// operating temperature), "charts"}.
nlohmann::ordered_json serve_layer_evaluation_json(const LayerEvaluation& e, const Target& t, double tolerance_uv_prime);

}  // namespace lampwright
