#include "lookfar/core/Text.hpp"

#include <cstdio>

namespace lookfar {

namespace {

/// Length of the well-formed UTF-8 sequence starting at `i`, or 0 when the byte at `i` does
/// not start one (RFC 3629, table 3-7 of the Unicode standard).
std::size_t utf8SequenceLength(const std::string& s, std::size_t i) {
    const auto byte = [&](std::size_t k) { return static_cast<unsigned char>(s[k]); };
    const unsigned char c = byte(i);
    if (c < 0x80)
        return 1;
    std::size_t n = 0;
    unsigned char lo = 0x80, hi = 0xBF;  // range of the second byte
    if (c >= 0xC2 && c <= 0xDF) {
        n = 2;
    } else if (c >= 0xE0 && c <= 0xEF) {
        n = 3;
        if (c == 0xE0)
            lo = 0xA0;  // no overlong forms
        if (c == 0xED)
            hi = 0x9F;  // no surrogates
    } else if (c >= 0xF0 && c <= 0xF4) {
        n = 4;
        if (c == 0xF0)
            lo = 0x90;  // no overlong forms
        if (c == 0xF4)
            hi = 0x8F;  // nothing above U+10FFFF
    } else {
        return 0;
    }
    if (i + n > s.size())
        return 0;
    if (byte(i + 1) < lo || byte(i + 1) > hi)
        return 0;
    for (std::size_t k = 2; k < n; ++k) {
        if (byte(i + k) < 0x80 || byte(i + k) > 0xBF)
            return 0;
    }
    return n;
}

std::string hexByte(unsigned char c) {
    char buf[8];
    std::snprintf(buf, sizeof buf, "\\x%02X", c);
    return buf;
}

}  // namespace

std::size_t invalidUtf8Offset(const std::string& text) {
    for (std::size_t i = 0; i < text.size();) {
        const std::size_t n = utf8SequenceLength(text, i);
        if (n == 0)
            return i;
        i += n;
    }
    return std::string::npos;
}

std::string escapeInvalidUtf8(const std::string& text) {
    if (invalidUtf8Offset(text) == std::string::npos)
        return text;
    std::string out;
    for (std::size_t i = 0; i < text.size();) {
        const std::size_t n = utf8SequenceLength(text, i);
        if (n == 0) {
            out += hexByte(static_cast<unsigned char>(text[i]));
            ++i;
        } else {
            out.append(text, i, n);
            i += n;
        }
    }
    return out;
}

std::string echoText(const std::string& text, std::size_t max_chars) {
    std::string out;
    std::size_t chars = 0;
    for (std::size_t i = 0; i < text.size();) {
        if (chars == max_chars)
            return out + "…";
        const std::size_t n = utf8SequenceLength(text, i);
        const auto c = static_cast<unsigned char>(text[i]);
        if (n == 0 || c < 0x20 || c == 0x7F) {
            out += hexByte(c);
            ++i;
        } else {
            out.append(text, i, n);
            i += n;
        }
        ++chars;
    }
    return out;
}

bool splitKeyValue(const std::string& text, std::string* key, std::string* value) {
    const std::size_t eq = text.find('=');
    if (eq == std::string::npos || eq == 0)
        return false;
    for (std::size_t i = 0; i < eq; ++i) {
        const char c = text[i];
        const bool word =
            (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') || c == '_';
        if (!word)
            return false;
    }
    *key = text.substr(0, eq);
    *value = text.substr(eq + 1);
    return true;
}

std::string describeInvalidUtf8(const std::string& text) {
    const std::size_t at = invalidUtf8Offset(text);
    if (at == std::string::npos)
        return "no invalid byte";
    char buf[64];
    std::snprintf(buf, sizeof buf, "byte 0x%02X at byte %zu",
                  static_cast<unsigned>(static_cast<unsigned char>(text[at])), at + 1);
    return buf;
}

}  // namespace lookfar
