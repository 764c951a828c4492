// sanitize_utf8 and dump_json (core/text_encoding.hpp): names in another encoding are kept with
// their bad bytes shown as U+FFFD, and JSON is written whatever they hold.
#include "lampwright/core/text_encoding.hpp"

#include <doctest/doctest.h>

#include <string>

using lampwright::dump_json;
using lampwright::sanitize_utf8;

namespace {
const std::string kFffd = "\xEF\xBF\xBD";
}

TEST_CASE("utf8: valid UTF-8 passes sanitize_utf8 unchanged") {
    for (const std::string s : {"", "lamp_07", "CIE 1931 2\xC2\xB0", "\xE2\x80\xB2 u'v'", "\xF0\x9F\x92\xA1 bulb", "\xF4\x8F\xBF\xBF"})
        CHECK(sanitize_utf8(s) == s);
}

TEST_CASE("utf8: each byte outside a well-formed sequence becomes U+FFFD (RFC 3629)") {
    CHECK(sanitize_utf8("lamp\xFF") == "lamp" + kFffd);
    CHECK(sanitize_utf8("\xB5W") == kFffd + "W");                         // Latin-1 micro sign
    CHECK(sanitize_utf8("a\xC0\xAF" "b") == "a" + kFffd + kFffd + "b");    // overlong '/'
    CHECK(sanitize_utf8("\xED\xA0\x80") == kFffd + kFffd + kFffd);         // a UTF-16 surrogate
    CHECK(sanitize_utf8("\xF4\x90\x80\x80") == kFffd + kFffd + kFffd + kFffd);  // above U+10FFFF
    CHECK(sanitize_utf8("\xE2\x80") == kFffd + kFffd);                     // cut short at the end
    CHECK(sanitize_utf8(std::string("a\0b", 3)) == std::string("a\0b", 3));
}

TEST_CASE("utf8: dump_json writes invalid bytes as U+FFFD instead of throwing") {
    nlohmann::ordered_json j;
    j["name"] = "lamp\xFF";
    CHECK(dump_json(j, -1) == "{\"name\":\"lamp" + kFffd + "\"}");
    CHECK_THROWS(j.dump());  // what nlohmann does by default: the failure this guards against
}
