#pragma once
// The error hierarchy of lookfar. Every error a user can cause maps to one exit code of
// docs/design.md; main() catches them once. The first sentence of what() is the message shown.
#include <stdexcept>
#include <string>

namespace lookfar {

/// Exit codes of docs/design.md.
enum ExitCode : int {
    kExitOk = 0,
    kExitInternal = 1,
    kExitUsage = 2,
    kExitBadInput = 3,
    kExitCannotWrite = 4,
    kExitInterrupted = 130,  // 128 + SIGINT: shell convention, common practice
};

/// Root of lookfar's errors.
class Error : public std::runtime_error {
  public:
    using std::runtime_error::runtime_error;
    virtual int exitCode() const noexcept { return kExitInternal; }
};

/// Malformed or out-of-range option values (exit 2).
class UsageError : public Error {
  public:
    using Error::Error;
    int exitCode() const noexcept override { return kExitUsage; }
};

/// An option value the library refuses, named by the field of its options struct
/// ("target_height_m"), not by a command-line flag: what() reads "target height: 3 m must be …".
/// The run layer, which knows the flags, rethrows it as a UsageError naming the flag.
class InvalidOption : public UsageError {
  public:
    InvalidOption(const std::string& field, const std::string& detail)
        : UsageError(words(field) + ": " + detail), field_(field), detail_(detail) {}
    /// The field, as in the options struct ("refraction", "target_height_m").
    const std::string& field() const noexcept { return field_; }
    /// The message after the field's name.
    const std::string& detail() const noexcept { return detail_; }
    /// "target_height_m" → "target height": underscores as spaces, a unit suffix dropped.
    static std::string words(std::string field) {
        for (const char* unit : {"_m", "_deg"}) {
            const std::string u = unit;
            if (field.size() > u.size() && field.compare(field.size() - u.size(), u.size(), u) == 0)
                field.resize(field.size() - u.size());
        }
        for (char& c : field)
            c = c == '_' ? ' ' : c;
        return field;
    }

  private:
    std::string field_, detail_;
};

/// Missing, unreadable or invalid input data: DEM, CSV rows, points outside the DEM (exit 3).
class InputError : public Error {
  public:
    using Error::Error;
    int exitCode() const noexcept override { return kExitBadInput; }
};

/// An output that cannot or must not be written (exit 4).
class OutputError : public Error {
  public:
    using Error::Error;
    int exitCode() const noexcept override { return kExitCannotWrite; }
};

/// A programmer error: a broken invariant inside lookfar (exit 1).
class InternalError : public Error {
  public:
    using Error::Error;
    int exitCode() const noexcept override { return kExitInternal; }
};

/// The run was interrupted (Ctrl-C); outputs were not written.
class Interrupted : public Error {
  public:
    Interrupted() : Error("interrupted: no output was written") {}
    int exitCode() const noexcept override { return kExitInterrupted; }
};

}  // namespace lookfar
