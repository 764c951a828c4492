#include "lampwright/report/provenance.hpp"

#include "lampwright/report/svg_plot.hpp"

#include <fmt/format.h>

namespace lampwright {

namespace {

// An XML comment may not contain "--" (XML 1.0, section 2.5).
std::string comment_safe(std::string s) {
    for (std::size_t i = s.find("--"); i != std::string::npos; i = s.find("--", i)) s.replace(i, 2, "- -");
    return s;
}

// The end of the first opening tag `<name ...>` in `doc`, or npos.
std::size_t after_opening_tag(const std::string& doc, const std::string& name) {
    const std::size_t at = doc.find("<" + name);
    if (at == std::string::npos) return std::string::npos;
    const std::size_t end = doc.find('>', at);
    return end == std::string::npos ? end : end + 1;
}

}  // namespace

std::string provenance_line(const RunProvenance& p) {
    std::string s = "lampwright " + p.version;
    if (!p.time_utc.empty()) s += " \xC2\xB7 " + p.time_utc;
    if (!p.lot_id.empty()) s += " \xC2\xB7 lot " + p.lot_id;
    if (!p.command_line.empty()) s += " \xC2\xB7 " + p.command_line;
    return s;
}

std::string stamp_document(std::string doc, const RunProvenance& p) {
    const std::string line = provenance_line(p);
    if (const std::size_t html = after_opening_tag(doc, "head"); html != std::string::npos && doc.find("<html") != std::string::npos) {
        doc.insert(html, "\n<!-- " + comment_safe(xml_escape(line)) + " -->");
        if (const std::size_t body_end = doc.rfind("</body>"); body_end != std::string::npos)
            doc.insert(body_end, fmt::format("<p class=\"provenance\" style=\"color:#555;font-size:smaller\">Made by {}</p>\n", xml_escape(line)));
        return doc;
    }
    if (const std::size_t svg = after_opening_tag(doc, "svg"); svg != std::string::npos) {
        doc.insert(svg, fmt::format("\n<!-- {} -->\n<desc>{}</desc>", comment_safe(xml_escape(line)), xml_escape(line)));
        return doc;
    }
    return doc;
}

}  // namespace lampwright
