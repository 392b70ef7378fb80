#include "Bridge.hpp"

#include <gdal.h>
#include <stdlib.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <condition_variable>
#include <cstdlib>
#include <exception>
#include <filesystem>
#include <mutex>
#include <thread>
#include <type_traits>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Progress.hpp"

namespace lookfar::python {

TempFolder::TempFolder() {
    const char* tmp = std::getenv("TMPDIR");
    std::string pattern = std::string(tmp && *tmp ? tmp : "/tmp") + "/lookfar-python-XXXXXX";
    if (!mkdtemp(pattern.data()))
        throw OutputError("cannot make a temporary folder under " +
                          pattern.substr(0, pattern.rfind('/')));
    path_ = pattern;
}

TempFolder::~TempFolder() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
}

namespace {

/// The text quoted as main.cpp quotes a word of the command line it records.
std::string quoted(const std::string& word) {
    return word.find_first_of(" \t\"'") == std::string::npos ? word : "'" + word + "'";
}

/// A whole number or a decimal number of `text`, all of it; false when it is not one.
template <typename T>
bool parseNumber(const std::string& text, T* out) {
    if (text.empty())
        return false;
    char* end = nullptr;
    if constexpr (std::is_same_v<T, int>) {
        const long long v = std::strtoll(text.c_str(), &end, 10);
        if (*end != '\0' || v < INT32_MIN || v > INT32_MAX)
            return false;
        *out = static_cast<int>(v);
    } else {
        const double v = std::strtod(text.c_str(), &end);
        if (*end != '\0')
            return false;
        *out = v;
    }
    return true;
}

}  // namespace

OptionSetter::OptionSetter(run::RunCommand& command, const std::string& dem_path)
    : table_(command.declare()), line_("lookfar " + command.help().name) {
    set("DEM", dem_path);
}

void OptionSetter::set(const std::string& flag, const std::string& text) {
    run::OptionDecl& d = run::findOption(table_, flag);
    if (d.check) {
        const std::string why = d.check(text);
        // As the CLI words it: "--flag: why", unless the check names the option itself.
        if (!why.empty())
            throw UsageError(why.rfind(flag + " ", 0) == 0 ? why : flag + ": " + why);
    }
    std::visit(
        [&](auto* field) {
            using Field = std::remove_pointer_t<decltype(field)>;
            if constexpr (std::is_same_v<Field, std::string>) {
                *field = text;
            } else if constexpr (std::is_same_v<Field, std::vector<std::string>>) {
                field->push_back(text);
            } else if constexpr (std::is_same_v<Field, bool>) {
                *field = true;
            } else {
                if (!parseNumber(text, field))
                    throw UsageError(flag + ": '" + text + "' is not a value it takes");
            }
        },
        d.field);
    if (d.given)
        *d.given = true;
    line_ += " " + (flag == "DEM" ? quoted(text) : flag + (text.empty() ? "" : " " + quoted(text)));
}

void OptionSetter::set(const std::string& flag, const py::handle& value) {
    if (!value.is_none())
        set(flag, optionText(value, flag));
}

void OptionSetter::flag(const std::string& flag) {
    set(flag, std::string());
}

void OptionSetter::output(const std::string& flag, const std::string& path, bool keep) {
    const std::string line = line_;
    set(flag, path);
    if (!keep)
        line_ = line;
}

std::string optionText(const py::handle& value, const std::string& flag) {
    if (py::isinstance<py::bool_>(value))
        throw UsageError(flag + ": takes a number, not " + std::string(py::str(value)));
    if (py::isinstance<py::str>(value) || py::isinstance<py::int_>(value) ||
        py::isinstance<py::float_>(value) || py::hasattr(value, "__float__"))
        return py::str(value);
    throw UsageError(flag + ": takes a number or a text such as '100ft', not a " +
                     std::string(py::str(value.get_type().attr("__name__"))));
}

namespace {

/// Progress of a run as the calling thread polls it: the fraction done of the current stage, and
/// a stop request the engines see through cancelled().
class PolledProgress final : public Progress {
  public:
    void begin(const std::string&, std::int64_t total) override {
        done_.store(0);
        total_.store(total);
    }
    void advance(std::int64_t done) override { done_.store(done); }
    void end() override { done_.store(total_.load()); }
    bool cancelled() const override { return stop_.load(); }
    void warn(const std::string& sentence) override {
        std::lock_guard<std::mutex> lock(mutex_);
        warnings_.push_back(sentence);
    }

    double fraction() const {
        const std::int64_t total = total_.load();
        if (total <= 0)
            return 0.0;
        return std::clamp(static_cast<double>(done_.load()) / static_cast<double>(total), 0.0, 1.0);
    }
    void stop() { stop_.store(true); }
    std::vector<std::string> warnings() {
        std::lock_guard<std::mutex> lock(mutex_);
        return warnings_;
    }

  private:
    std::atomic<std::int64_t> done_{0}, total_{0};
    std::atomic<bool> stop_{false};
    std::mutex mutex_;
    std::vector<std::string> warnings_;
};

}  // namespace

run::RunReport runCommandReleased(run::RunCommand& command, const std::string& command_line,
                                  const py::object& progress) {
    PolledProgress sink;
    const run::RunEnv env{&sink, command_line};
    std::mutex mutex;
    std::condition_variable done;
    bool finished = false;
    run::RunReport report;
    std::exception_ptr run_error;
    std::thread worker([&] {
        try {
            report = run::runCommand(command, env);
        } catch (...) {
            run_error = std::current_exception();
        }
        {
            std::lock_guard<std::mutex> lock(mutex);
            finished = true;
        }
        done.notify_all();
    });
    std::exception_ptr caller_error;  // Ctrl-C, or an exception of the progress callable
    double shown = 0.0;               // the fraction last passed to progress
    for (;;) {
        bool over = false;
        {
            py::gil_scoped_release release;
            std::unique_lock<std::mutex> lock(mutex);
            over = done.wait_for(lock, std::chrono::milliseconds(50), [&] { return finished; });
        }
        if (over)
            break;
        if (caller_error)
            continue;
        try {
            if (PyErr_CheckSignals() != 0)
                throw py::error_already_set();
            const double f = sink.fraction();
            if (!progress.is_none() && f > shown) {
                shown = f;
                progress(f);
            }
        } catch (...) {
            caller_error = std::current_exception();
            sink.stop();
        }
    }
    {
        py::gil_scoped_release release;
        worker.join();
    }
    if (caller_error)
        std::rethrow_exception(caller_error);
    if (run_error)
        std::rethrow_exception(run_error);
    for (const std::string& w : sink.warnings()) {
        if (PyErr_WarnEx(PyExc_UserWarning, w.c_str(), 1) != 0)
            throw py::error_already_set();
    }
    if (!progress.is_none() && shown < 1.0)
        progress(1.0);
    return report;
}

py::array readRasterArray(const std::string& path, int band) {
    GDALDatasetH ds =
        GDALOpenEx(path.c_str(), GDAL_OF_RASTER | GDAL_OF_READONLY, nullptr, nullptr, nullptr);
    if (!ds)
        throw OutputError(path + ": cannot read back the raster just written");
    const int width = GDALGetRasterXSize(ds), height = GDALGetRasterYSize(ds);
    const int bands = GDALGetRasterCount(ds);
    const int first = band == 0 ? 1 : band, count = band == 0 ? bands : 1;
    const GDALDataType type = GDALGetRasterDataType(GDALGetRasterBand(ds, first));
    py::dtype dtype;
    switch (type) {
        case GDT_Byte:
            dtype = py::dtype::of<std::uint8_t>();
            break;
        case GDT_UInt16:
            dtype = py::dtype::of<std::uint16_t>();
            break;
        case GDT_Int32:
            dtype = py::dtype::of<std::int32_t>();
            break;
        case GDT_Float32:
            dtype = py::dtype::of<float>();
            break;
        default:
            dtype = py::dtype::of<double>();
            break;
    }
    const GDALDataType as =
        type == GDT_Byte || type == GDT_UInt16 || type == GDT_Int32 || type == GDT_Float32
            ? type
            : GDT_Float64;
    std::vector<py::ssize_t> shape = {height, width};
    if (count > 1)
        shape.insert(shape.begin(), count);
    py::array out(dtype, shape);
    char* data = static_cast<char*>(out.mutable_data());
    const std::size_t band_bytes =
        static_cast<std::size_t>(width) * height * static_cast<std::size_t>(out.itemsize());
    CPLErr err = CE_None;
    {
        py::gil_scoped_release release;
        for (int b = 0; b < count && err == CE_None; ++b) {
            err = GDALRasterIO(GDALGetRasterBand(ds, first + b), GF_Read, 0, 0, width, height,
                               data + b * band_bytes, width, height, as, 0, 0);
        }
        GDALClose(ds);
    }
    if (err != CE_None)
        throw OutputError(path + ": cannot read back the raster just written");
    return out;
}

py::object toPython(const nlohmann::json& j) {
    return py::module_::import("json").attr("loads")(j.dump());
}

void dropTempOutputs(nlohmann::json& summary, const TempFolder& temp) {
    const std::string prefix = temp.path() + "/";
    auto inTemp = [&](const nlohmann::json& v) {
        return v.is_string() && v.get<std::string>().rfind(prefix, 0) == 0;
    };
    if (summary.contains("outputs") && summary["outputs"].is_object()) {
        nlohmann::json& outputs = summary["outputs"];
        for (auto it = outputs.begin(); it != outputs.end();) {
            if (inTemp(*it))
                it = outputs.erase(it);
            else
                ++it;
        }
    }
    for (auto it = summary.begin(); it != summary.end();) {
        if (it->is_object() && it->contains("path") && inTemp((*it)["path"]))
            it = summary.erase(it);
        else
            ++it;
    }
}

void registerErrors(py::module_& m) {
    py::register_exception<UsageError>(m, "UsageError", PyExc_ValueError);
    py::register_exception<InputError>(m, "InputError", PyExc_ValueError);
    py::register_exception<OutputError>(m, "OutputError", PyExc_OSError);
    py::register_exception_translator([](std::exception_ptr p) {
        try {
            if (p)
                std::rethrow_exception(p);
        } catch (const Interrupted& e) {
            PyErr_SetString(PyExc_KeyboardInterrupt, e.what());
        }
    });
}

}  // namespace lookfar::python
