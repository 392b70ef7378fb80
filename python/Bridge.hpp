#pragma once
// What every function of the Python module shares: a command's options filled from keyword
// arguments (with the checks the CLI runs while parsing), the run on a worker thread while the
// calling thread, holding the GIL only between waits, passes progress to a Python callable and
// turns Ctrl-C into KeyboardInterrupt; private temporary folders for outputs the caller did not
// ask to keep; rasters read back into numpy arrays; the summary as a Python dict.
#include <pybind11/numpy.h>
#include <pybind11/pybind11.h>

#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "lookfar/run/Command.hpp"

namespace lookfar::python {

namespace py = pybind11;

/// A folder of its own under the system's temporary folder, removed with everything in it when
/// the object goes.
class TempFolder {
  public:
    TempFolder();
    ~TempFolder();
    TempFolder(const TempFolder&) = delete;
    TempFolder& operator=(const TempFolder&) = delete;
    /// `name` inside the folder.
    std::string file(const std::string& name) const { return path_ + "/" + name; }
    const std::string& path() const { return path_; }

  private:
    std::string path_;
};

/// A command's options filled from Python, with the equivalent command line built alongside (it
/// is recorded in the summary and the rasters' metadata, as the CLI records what was typed).
class OptionSetter {
  public:
    OptionSetter(run::RunCommand& command, const std::string& dem_path);
    /// Sets the option `flag` from `text` as the CLI would parse it: the declaration's check
    /// first (UsageError "--flag: …" as the CLI words it), then the conversion to the field.
    void set(const std::string& flag, const std::string& text);
    /// set() with the text of a Python value: str() of a number or a string; nothing for None.
    void set(const std::string& flag, const py::handle& value);
    /// Sets a flag option (no value).
    void flag(const std::string& flag);
    /// Sets an output path; `keep` false for a path in a temporary folder (left out of the
    /// command line and of the summary's outputs).
    void output(const std::string& flag, const std::string& path, bool keep);
    const std::string& commandLine() const { return line_; }

  private:
    run::OptionTable table_;
    std::string line_;
};

/// The text of a Python number or string as the CLI would receive it ("1.7", "100ft").
std::string optionText(const py::handle& value, const std::string& flag);

/// Runs `command` (run::runCommand) on a worker thread. Meanwhile the calling thread waits with
/// the GIL released, and between waits (every 50 ms) calls `progress(fraction)` when the fraction
/// done has grown and checks Python's signals: Ctrl-C stops the run and raises KeyboardInterrupt
/// once the run has cleaned up; an exception raised by `progress` stops the run and is raised.
/// lookfar's errors are raised as the module's exceptions. Sentences the run warns with become
/// Python warnings (UserWarning).
run::RunReport runCommandReleased(run::RunCommand& command, const std::string& command_line,
                                  const py::object& progress);

/// Band `band` of a raster as a numpy array of its own type (uint8, uint16, int32, float32,
/// float64), rows × cols, or bands × rows × cols when `band` is 0 and it has several.
py::array readRasterArray(const std::string& path, int band = 1);

/// A JSON value as Python objects (dict, list, str, float, int, bool, None).
py::object toPython(const nlohmann::json& j);

/// Removes from the summary's "outputs" every path inside `temp` (outputs the caller did not ask
/// to keep).
void dropTempOutputs(nlohmann::json& summary, const TempFolder& temp);

/// Registers UsageError, InputError (ValueError), OutputError (OSError) and the translation of
/// lookfar's C++ errors into them (Interrupted → KeyboardInterrupt).
void registerErrors(py::module_& m);

}  // namespace lookfar::python
