#pragma once
// File names made from user text (the --per-site rasters are named after their sites) and the
// check of an output folder before any work.
#include <string>
#include <vector>

namespace lookfar {

/// Longest stem safeFileStem() keeps, bytes (a file name may hold 255; room for a suffix and
/// an extension).
inline constexpr std::size_t kMaxFileStemBytes = 200;

/// `name` made safe for a file name: ASCII letters and digits, '-' and '_' are kept, and so are
/// the letters of the common alphabets beyond ASCII (Latin with its accents, Greek, Cyrillic,
/// Armenian, Hebrew, Arabic, the CJK ideographs, kana and Hangul syllables) and combining
/// accents, written in UTF-8; every other character (space, '.', '/', punctuation, control
/// bytes, bytes that are not UTF-8) becomes '_'. Cut at a character's end to at most
/// kMaxFileStemBytes bytes. Empty for an empty name.
std::string safeFileStem(const std::string& name);

/// One file name per item, in order: safeFileStem(names[i]) + `extension`; an empty stem is
/// "line_" + lines[i]. Names are compared without regard to ASCII case (a folder copied to a
/// file system that ignores case keeps every file): an item whose stem another item holds gets
/// the first free "_2", "_3", … after it, the earlier item in the list keeping the plain stem,
/// and no suffixed name takes a stem that another item has as its own.
std::vector<std::string> uniqueFileNames(const std::vector<std::string>& names,
                                         const std::vector<int>& lines,
                                         const std::string& extension);

/// Checks an output folder before any work (throws OutputError naming `option` and the folder):
/// it is a folder or does not exist yet; an existing one is writable and, unless `overwrite`,
/// empty; a missing one has a writable parent folder, where it will be made.
void checkOutputFolder(const std::string& folder, const std::string& option, bool overwrite);

}  // namespace lookfar
