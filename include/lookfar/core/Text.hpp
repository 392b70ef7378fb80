#pragma once
// Text as lookfar receives it from users: UTF-8 checks, and the safe echo of user text in
// messages and JSON (invalid bytes and control bytes written as \xNN, long text cut).
#include <cstddef>
#include <string>

namespace lookfar {

/// Offset (0-based) of the first byte of `text` that is not part of well-formed UTF-8
/// (RFC 3629: no overlong forms, no surrogates, nothing above U+10FFFF), or npos when valid.
std::size_t invalidUtf8Offset(const std::string& text);

/// `text` with every byte that is not part of well-formed UTF-8 written as \xNN (upper-case
/// hex): the result is always valid UTF-8, so it can go into JSON or raster metadata.
std::string escapeInvalidUtf8(const std::string& text);

/// `text` for quoting in a message: invalid UTF-8 and control bytes (below 0x20, and 0x7F)
/// written as \xNN, cut after `max_chars` characters with "…" appended.
std::string echoText(const std::string& text, std::size_t max_chars = 60);

/// Splits "KEY=VALUE" at the first '=': KEY is one or more letters, digits and '_' (the form of
/// GDAL's option names), VALUE is the rest. False, with `key` and `value` untouched, otherwise.
bool splitKeyValue(const std::string& text, std::string* key, std::string* value);

/// "byte 0xE9 at byte 5": names the first byte of `text` that breaks UTF-8 (1-based position),
/// for messages; `text` must hold such a byte.
std::string describeInvalidUtf8(const std::string& text);

}  // namespace lookfar
