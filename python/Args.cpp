#include "Args.hpp"

#include <cstdio>

#include "lookfar/core/Errors.hpp"
#include "lookfar/earth/EarthModel.hpp"

namespace lookfar::python {

void setCommon(OptionSetter& set, const PyDem& dem, const CommonArgs& a) {
    // Only what the command declares: a function offers only its command's keywords.
    if (dem.band() != 1)
        set.set("--band", std::to_string(dem.band()));
    if (!dem.zUnit().empty())
        set.set("--z-unit", dem.zUnit());
    set.set("--observer-height", a.observer_height);
    set.set("--target-height", a.target_height);
    set.set("--reach", a.reach);
    set.set("--refraction", a.refraction);
    set.set("--earth-model", a.earth_model);
    // The default radius is given only where it means something (the CLI refuses it otherwise).
    const bool sphere =
        !a.earth_model.is_none() && py::str(a.earth_model).cast<std::string>() == "sphere";
    if (!a.earth_radius.is_none() &&
        (sphere || optionText(a.earth_radius, "--earth-radius") !=
                       py::str(py::float_(EarthModel::kMeanRadiusM)).cast<std::string>()))
        set.set("--earth-radius", a.earth_radius);
    set.set("--crs", a.crs);
    set.set("--method", a.method);
    set.set("--threads", a.threads);
}

std::string pointText(const py::object& point, const std::string& flag) {
    try {
        const py::sequence seq = point.cast<py::sequence>();
        if (py::len(seq) == 2 && !py::isinstance<py::str>(point))
            return optionText(seq[0], flag) + "," + optionText(seq[1], flag);
    } catch (const py::cast_error&) {
    }
    throw UsageError(flag + ": give the point as a pair (x, y)");
}

OutputChoice outputChoice(const py::object& value, const TempFolder& temp,
                          const std::string& name) {
    if (value.is_none() || (py::isinstance<py::bool_>(value) && !value.cast<bool>()))
        return {};
    if (py::isinstance<py::bool_>(value))
        return {temp.file(name), false};
    return {py::str(py::module_::import("os").attr("fspath")(value)), true};
}

std::string sitesCsv(const py::object& sites, const TempFolder& temp) {
    if (py::isinstance<py::str>(sites) || py::hasattr(sites, "__fspath__"))
        return py::str(py::module_::import("os").attr("fspath")(sites));
    std::string csv = "name,x,y,height\n";
    auto field = [](const std::string& text) {
        std::string q = "\"";
        for (char c : text)
            q += c == '"' ? std::string("\"\"") : std::string(1, c);
        return q + "\"";
    };
    for (const py::handle& row : sites) {
        const py::sequence r = py::reinterpret_borrow<py::sequence>(row);
        if (py::len(r) < 3 || py::len(r) > 4)
            throw UsageError("sites: each site is (name, x, y) or (name, x, y, height)");
        csv += field(py::str(r[0])) + "," + optionText(r[1], "sites") + "," +
               optionText(r[2], "sites") + "," +
               (py::len(r) == 4 ? optionText(r[3], "sites") : std::string()) + "\n";
    }
    const std::string path = temp.file("sites.csv");
    FILE* f = std::fopen(path.c_str(), "wb");
    if (!f || std::fwrite(csv.data(), 1, csv.size(), f) != csv.size()) {
        if (f)
            std::fclose(f);
        throw OutputError("sites: cannot write the sites' CSV " + path);
    }
    std::fclose(f);
    return path;
}

py::object summaryOf(nlohmann::json summary, const TempFolder& temp, const PyDem& dem) {
    dropTempOutputs(summary, temp);
    if (dem.isArray() && summary.contains("dem"))
        summary["dem"]["path"] = nullptr;
    return toPython(summary);
}

}  // namespace lookfar::python
