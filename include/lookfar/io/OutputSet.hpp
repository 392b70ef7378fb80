#pragma once
// The outputs of one run, written all together or not at all.
//
// Every output is finished in a hidden temporary file of its own folder first (rasters through
// RasterWriter::finish(), text through addText()). Only when every one is finished does commit()
// rename them into place, one after the other; an earlier file of the same name is kept as a hard
// link until every rename has succeeded, so a failed rename puts every earlier file back. A set
// destroyed before commit() (an error, an interruption) removes all its temporaries: a failed run
// leaves neither a partial file nor a mixed set of new and old files.
#include <cstdio>
#include <memory>
#include <string>
#include <vector>

namespace lookfar {

class RasterWriter;

/// The folder of a path: "." for a bare name, "/" for a file at the root.
std::string folderOf(const std::string& path);

/// A hidden temporary path beside `path` (same folder, so rename() stays on one file system):
/// ".NAME.lookfar-PID-N.tmp" + `suffix`. Unique within the process.
std::string temporaryPathFor(const std::string& path, const std::string& suffix = "");

/// A sentence for a failed write of `path`: "no space left on device" when the folder's file
/// system is full (or errno says so), else `detail`.
std::string writeFailureReason(const std::string& path, const std::string& detail, int err = 0);

/// True when `a` and `b` name the same file: the same existing file (device and inode), or, for
/// paths that do not exist yet, the same name in the same folder (folders compared as files).
bool sameFile(const std::string& a, const std::string& b);

/// A text output written piece by piece into its temporary file (see OutputSet::openText).
class TextStream {
  public:
    explicit TextStream(std::string path);
    ~TextStream();
    TextStream(const TextStream&) = delete;
    TextStream& operator=(const TextStream&) = delete;
    /// Appends `text`; throws OutputError (the message says when the disk is full).
    void write(const std::string& text);
    /// Closes the file, checking that every byte reached it; throws OutputError.
    void close();
    const std::string& temp() const { return temp_; }
    const std::string& path() const { return path_; }

  private:
    std::string path_, temp_;
    std::FILE* file_ = nullptr;
};

class OutputSet {
  public:
    OutputSet() = default;
    ~OutputSet();
    OutputSet(const OutputSet&) = delete;
    OutputSet& operator=(const OutputSet&) = delete;

    /// Finishes `writer` into its temporary file (throws OutputError, e.g. when the disk is
    /// full) and takes charge of that file until commit().
    void addRaster(RasterWriter& writer);
    /// Writes `content` to a temporary file for `path` now (throws OutputError).
    void addText(const std::string& path, const std::string& content);
    /// Opens a text output to be written piece by piece (a large CSV streamed row by row rather
    /// than held in memory); commit() closes it. The stream lives as long as the set.
    TextStream& openText(const std::string& path);
    /// Takes charge of a finished temporary file `temp` that becomes `path` on commit().
    void adopt(const std::string& temp, const std::string& path);
    /// Makes the folder `path` unless it exists (throws OutputError). A folder made here is
    /// removed again, once its temporaries are, when the set is destroyed before commit().
    void makeFolder(const std::string& path);

    /// Renames every finished output into place. Throws Interrupted when the run was
    /// interrupted before (nothing renamed), OutputError when a rename fails (every earlier file
    /// is restored). Renames in the order the outputs were added.
    void commit();
    /// The final paths, in the order added.
    std::vector<std::string> paths() const;
    bool empty() const { return entries_.empty(); }

  private:
    struct Entry {
        std::string temp;
        std::string path;
    };
    std::vector<Entry> entries_;
    std::vector<std::unique_ptr<TextStream>> streams_;
    std::vector<std::string> made_folders_;
    bool committed_ = false;
};

}  // namespace lookfar
