#include "lookfar/io/FileNames.hpp"

#include <dirent.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cstring>
#include <set>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/io/OutputSet.hpp"

namespace lookfar {

namespace {

/// True for the code points kept in a file name beyond ASCII: letters of the common alphabets
/// and combining accents (ranges from the Unicode code charts, letters only where a block mixes
/// letters with signs).
bool keptBeyondAscii(char32_t cp) {
    struct Range {
        char32_t lo, hi;
    };
    static const Range kKept[] = {
        {0x00C0, 0x00D6}, {0x00D8, 0x00F6}, {0x00F8, 0x024F},  // Latin-1 letters, Latin Ext. A/B
        {0x0300, 0x036F},                                      // combining diacritical marks
        {0x0386, 0x0386}, {0x0388, 0x038A}, {0x038C, 0x038C},
        {0x038E, 0x03A1}, {0x03A3, 0x03FF},  // Greek letters
        {0x0400, 0x0481}, {0x048A, 0x052F},  // Cyrillic letters
        {0x0531, 0x0556}, {0x0561, 0x0587},  // Armenian letters
        {0x05D0, 0x05EA},                    // Hebrew letters
        {0x0620, 0x064A},                    // Arabic letters
        {0x1E00, 0x1EFF},                    // Latin Extended Additional
        {0x1F00, 0x1FBC},                    // Greek Extended (letters)
        {0x3041, 0x3096}, {0x30A1, 0x30FA},  // hiragana, katakana
        {0x4E00, 0x9FFF},                    // CJK unified ideographs
        {0xAC00, 0xD7A3},                    // Hangul syllables
    };
    for (const Range& r : kKept)
        if (cp >= r.lo && cp <= r.hi)
            return true;
    return false;
}

bool asciiKept(unsigned char c) {
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '-' ||
           c == '_';
}

std::string asciiLower(std::string s) {
    for (char& c : s)
        if (c >= 'A' && c <= 'Z')
            c = static_cast<char>(c - 'A' + 'a');
    return s;
}

}  // namespace

std::string safeFileStem(const std::string& name) {
    std::string out;
    std::size_t i = 0;
    while (i < name.size()) {
        const unsigned char c = static_cast<unsigned char>(name[i]);
        if (c < 0x80) {
            if (out.size() + 1 > kMaxFileStemBytes)
                break;
            out += asciiKept(c) ? static_cast<char>(c) : '_';
            ++i;
            continue;
        }
        // The UTF-8 sequence starting here, if well formed (invalidUtf8Offset checks it).
        const std::size_t len = c >= 0xF0 ? 4 : c >= 0xE0 ? 3 : c >= 0xC0 ? 2 : 1;
        const std::string seq = name.substr(i, len);
        char32_t cp = 0;
        bool valid = len > 1 && seq.size() == len && invalidUtf8Offset(seq) == std::string::npos;
        if (valid) {
            cp = c & (len == 2 ? 0x1F : len == 3 ? 0x0F : 0x07);
            for (std::size_t k = 1; k < len; ++k)
                cp = (cp << 6) | (static_cast<unsigned char>(seq[k]) & 0x3F);
        }
        const bool keep = valid && keptBeyondAscii(cp);
        const std::size_t add = keep ? len : 1;
        if (out.size() + add > kMaxFileStemBytes)
            break;
        out += keep ? seq : std::string("_");
        i += valid ? len : 1;
    }
    return out;
}

std::vector<std::string> uniqueFileNames(const std::vector<std::string>& names,
                                         const std::vector<int>& lines,
                                         const std::string& extension) {
    std::vector<std::string> stems;
    std::set<std::string> own;  // every item's own stem, case folded
    for (std::size_t i = 0; i < names.size(); ++i) {
        std::string stem = safeFileStem(names[i]);
        if (stem.empty())
            stem = "line_" + std::to_string(i < lines.size() ? lines[i] : static_cast<int>(i + 1));
        stems.push_back(stem);
        own.insert(asciiLower(stem));
    }
    std::set<std::string> taken;
    std::vector<std::string> out;
    for (const std::string& stem : stems) {
        std::string chosen = stem;
        if (taken.count(asciiLower(stem))) {
            for (int n = 2;; ++n) {
                chosen = stem + "_" + std::to_string(n);
                const std::string key = asciiLower(chosen);
                if (!taken.count(key) && !own.count(key))
                    break;
            }
        }
        taken.insert(asciiLower(chosen));
        out.push_back(chosen + extension);
    }
    return out;
}

void checkOutputFolder(const std::string& folder, const std::string& option, bool overwrite) {
    const std::string named = option + " " + escapeInvalidUtf8(folder);
    if (folder.empty())
        throw OutputError(option + ": the folder name is empty");
    struct stat st {};
    if (stat(folder.c_str(), &st) == 0) {
        if (!S_ISDIR(st.st_mode))
            throw OutputError(named +
                              ": this is a file, not a folder; give a folder for the rasters");
        if (access(folder.c_str(), W_OK | X_OK) != 0)
            throw OutputError(named + ": the folder is not writable");
        if (overwrite)
            return;
        DIR* d = opendir(folder.c_str());
        if (!d)
            throw OutputError(named + ": the folder cannot be read");
        bool empty = true;
        while (const dirent* e = readdir(d)) {
            if (std::strcmp(e->d_name, ".") != 0 && std::strcmp(e->d_name, "..") != 0) {
                empty = false;
                break;
            }
        }
        closedir(d);
        if (!empty) {
            throw OutputError(named +
                              ": the folder exists and is not empty; give an empty or new folder, "
                              "or --overwrite to write into it");
        }
        return;
    }
    std::string parent = folder;
    while (parent.size() > 1 && parent.back() == '/')
        parent.pop_back();
    parent = folderOf(parent);
    struct stat pst {};
    if (stat(parent.c_str(), &pst) != 0 || !S_ISDIR(pst.st_mode))
        throw OutputError(named + ": its parent folder '" + escapeInvalidUtf8(parent) +
                          "' does not exist");
    if (access(parent.c_str(), W_OK | X_OK) != 0)
        throw OutputError(named + ": its parent folder '" + escapeInvalidUtf8(parent) +
                          "' is not writable");
}

}  // namespace lookfar
