#include "lookfar/io/OutputSet.hpp"

#include <sys/stat.h>
#include <sys/statvfs.h>
#include <unistd.h>

#include <atomic>
#include <cerrno>
#include <climits>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <fstream>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Progress.hpp"
#include "lookfar/io/RasterWriter.hpp"

namespace lookfar {

namespace {

std::atomic<int> g_counter{0};

std::string nameOf(const std::string& path) {
    auto slash = path.find_last_of('/');
    return slash == std::string::npos ? path : path.substr(slash + 1);
}

bool exists(const std::string& path) {
    struct stat st {};
    return lstat(path.c_str(), &st) == 0;
}

}  // namespace

std::string folderOf(const std::string& path) {
    auto slash = path.find_last_of('/');
    if (slash == std::string::npos)
        return ".";
    if (slash == 0)
        return "/";
    return path.substr(0, slash);
}

std::string temporaryPathFor(const std::string& path, const std::string& suffix) {
    std::string folder = folderOf(path);
    std::string prefix = folder == "/" ? "/" : folder + "/";
    return prefix + "." + nameOf(path) + ".lookfar-" + std::to_string(getpid()) + "-" +
           std::to_string(g_counter++) + ".tmp" + suffix;
}

std::string writeFailureReason(const std::string& path, const std::string& detail, int err) {
    bool full = err == ENOSPC || err == EDQUOT;
    struct statvfs fs {};
    if (!full && statvfs(folderOf(path).c_str(), &fs) == 0) {
        // A file system with less than 64 KiB left is taken as full: GDAL's and the C library's
        // messages rarely say so themselves.
        full = static_cast<unsigned long long>(fs.f_bavail) * fs.f_frsize < 65536ull;
    }
    if (full)
        return "no space left on device in '" + folderOf(path) + "'";
    return detail;
}

bool sameFile(const std::string& a, const std::string& b) {
    if (a.empty() || b.empty())
        return false;
    struct stat sa {
    }, sb{};
    bool ea = stat(a.c_str(), &sa) == 0;
    bool eb = stat(b.c_str(), &sb) == 0;
    if (ea && eb)
        return sa.st_dev == sb.st_dev && sa.st_ino == sb.st_ino;
    if (ea != eb)
        return false;
    // Neither exists yet: the same name in the same folder.
    if (nameOf(a) != nameOf(b))
        return false;
    struct stat fa {
    }, fb{};
    if (stat(folderOf(a).c_str(), &fa) != 0 || stat(folderOf(b).c_str(), &fb) != 0)
        return folderOf(a) == folderOf(b);
    return fa.st_dev == fb.st_dev && fa.st_ino == fb.st_ino;
}

TextStream::TextStream(std::string path) : path_(std::move(path)), temp_(temporaryPathFor(path_)) {
    file_ = std::fopen(temp_.c_str(), "wb");
    if (!file_) {
        int err = errno;
        throw OutputError(path_ + ": cannot write the file (" +
                          writeFailureReason(path_, std::strerror(err), err) + ")");
    }
}

TextStream::~TextStream() {
    if (file_)
        std::fclose(file_);
}

void TextStream::write(const std::string& text) {
    if (!file_)
        throw InternalError("write to a closed text output " + path_);
    errno = 0;
    if (std::fwrite(text.data(), 1, text.size(), file_) != text.size()) {
        int err = errno;
        throw OutputError(path_ + ": writing failed (" +
                          writeFailureReason(path_, std::strerror(err), err) + ")");
    }
}

void TextStream::close() {
    if (!file_)
        return;
    errno = 0;
    bool ok = std::fflush(file_) == 0;
    int err = errno;
    ok = std::fclose(file_) == 0 && ok;
    file_ = nullptr;
    if (!ok) {
        if (!err)
            err = errno;
        throw OutputError(path_ + ": writing failed (" +
                          writeFailureReason(path_, std::strerror(err), err) + ")");
    }
}

TextStream& OutputSet::openText(const std::string& path) {
    streams_.push_back(std::make_unique<TextStream>(path));
    entries_.push_back({streams_.back()->temp(), path});  // removed by the destructor from here on
    return *streams_.back();
}

OutputSet::~OutputSet() {
    streams_.clear();  // closes the files before their temporaries are removed
    if (committed_)
        return;
    for (const auto& e : entries_)
        std::remove(e.temp.c_str());
    for (auto f = made_folders_.rbegin(); f != made_folders_.rend(); ++f)
        rmdir(f->c_str());  // only when empty: nothing but this run's temporaries was there
}

void OutputSet::makeFolder(const std::string& path) {
    struct stat st {};
    if (stat(path.c_str(), &st) == 0 && S_ISDIR(st.st_mode))
        return;
    if (mkdir(path.c_str(), 0777) != 0) {
        int err = errno;
        throw OutputError(path + ": cannot make the folder (" +
                          writeFailureReason(path, std::strerror(err), err) + ")");
    }
    made_folders_.push_back(path);
}

void OutputSet::addRaster(RasterWriter& writer) {
    std::string temp = writer.finish();
    entries_.push_back({temp, writer.spec().path});
}

void OutputSet::adopt(const std::string& temp, const std::string& path) {
    entries_.push_back({temp, path});
}

void OutputSet::addText(const std::string& path, const std::string& content) {
    std::string temp = temporaryPathFor(path);
    FILE* f = std::fopen(temp.c_str(), "wb");
    if (!f) {
        int err = errno;
        throw OutputError(path + ": cannot write the file (" +
                          writeFailureReason(path, std::strerror(err), err) + ")");
    }
    entries_.push_back({temp, path});  // removed by the destructor from here on
    errno = 0;
    bool ok = std::fwrite(content.data(), 1, content.size(), f) == content.size();
    ok = std::fflush(f) == 0 && ok;
    int err = errno;
    ok = std::fclose(f) == 0 && ok;
    if (!ok) {
        if (!err)
            err = errno;
        throw OutputError(path + ": writing failed (" +
                          writeFailureReason(path, std::strerror(err), err) + ")");
    }
}

void OutputSet::commit() {
    if (committed_)
        throw InternalError("an output set was committed twice");
    if (interruptFlag().load())
        throw Interrupted();
    for (auto& stream : streams_)
        stream->close();
    // Keep every earlier file under a hidden link until all renames have succeeded.
    std::vector<std::string> backups(entries_.size());
    std::vector<bool> existed(entries_.size(), false);
    for (std::size_t i = 0; i < entries_.size(); ++i) {
        const std::string& path = entries_[i].path;
        if (!exists(path))
            continue;
        existed[i] = true;
        std::string backup = temporaryPathFor(path, ".old");
        if (link(path.c_str(), backup.c_str()) == 0)
            backups[i] = backup;
    }
    auto dropBackups = [&] {
        for (const auto& b : backups)
            if (!b.empty())
                std::remove(b.c_str());
    };
    for (std::size_t i = 0; i < entries_.size(); ++i) {
        if (std::rename(entries_[i].temp.c_str(), entries_[i].path.c_str()) == 0)
            continue;
        int err = errno;
        // Put back what was renamed so far and remove the other temporaries.
        for (std::size_t j = 0; j < i; ++j) {
            if (!backups[j].empty()) {
                if (std::rename(backups[j].c_str(), entries_[j].path.c_str()) == 0)
                    backups[j].clear();
            } else if (!existed[j]) {
                std::remove(entries_[j].path.c_str());
            }
        }
        dropBackups();
        for (std::size_t j = i; j < entries_.size(); ++j)
            std::remove(entries_[j].temp.c_str());
        const std::string failed = entries_[i].path;
        entries_.clear();
        throw OutputError(failed + ": cannot move the finished file into place (" +
                          writeFailureReason(failed, std::strerror(err), err) +
                          "); no output of this run was written");
    }
    dropBackups();
    committed_ = true;
}

std::vector<std::string> OutputSet::paths() const {
    std::vector<std::string> out;
    for (const auto& e : entries_)
        out.push_back(e.path);
    return out;
}

}  // namespace lookfar
