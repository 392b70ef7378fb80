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
