#pragma once
// Where a result came from: the version of lampwright, the command line, the time (UTC) and, for
// QC, the lot. Stamped into every HTML report and SVG file so a printed chart can be traced.
#include <string>

namespace lampwright {

struct RunProvenance {
    std::string version;       // kVersion
    std::string command_line;  // the arguments as typed, shell-quoted where needed
    std::string time_utc;      // ISO 8601, e.g. 2026-12-03T07:15:02Z
    std::string lot_id;        // empty when there is none
};

// The line written into documents: "lampwright 0.1.0 · 2026-12-03T07:15:02Z · lot L1 · lampwright qc ..."
std::string provenance_line(const RunProvenance& p);

// Returns `document` (SVG or HTML) with the provenance added: an XML comment after the root
// element's opening tag (SVG: also a <desc> element, read by screen readers and editors); HTML
// also gets a visible footer line before </body>. Documents of another shape are returned as given.
std::string stamp_document(std::string document, const RunProvenance& p);

}  // namespace lampwright
