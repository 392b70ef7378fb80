#include <sys/resource.h>
#include <sys/wait.h>
#include <fcntl.h>
#include <unistd.h>

#include <algorithm>
#include <cstdio>

#include "Bench.hpp"
#include "lookfar/core/FractalTerrain.hpp"
#include "lookfar/io/Dem.hpp"
#include "lookfar/io/RasterWriter.hpp"

namespace lookfar::bench {

ChildRun runChild(const std::vector<std::string>& argv) {
    ChildRun run;
    auto t0 = std::chrono::steady_clock::now();
    pid_t pid = fork();
    if (pid == 0) {
        int devnull = open("/dev/null", O_WRONLY);
        dup2(devnull, STDOUT_FILENO);
        dup2(devnull, STDERR_FILENO);
        std::vector<char*> cargs;
        for (const auto& a : argv)
            cargs.push_back(const_cast<char*>(a.c_str()));
        cargs.push_back(nullptr);
        execv(cargs[0], cargs.data());
        _exit(127);
    }
    int status = 0;
    struct rusage ru {};
    wait4(pid, &status, 0, &ru);
    run.wall_s = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    run.peak_rss_bytes = static_cast<std::int64_t>(ru.ru_maxrss) * 1024;
    run.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
    return run;
}

double median(std::vector<double> v) {
    if (v.empty())
        return 0;
    std::sort(v.begin(), v.end());
    std::size_t n = v.size();
    return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

std::int64_t selfPeakRssBytes() {
    struct rusage ru {};
    getrusage(RUSAGE_SELF, &ru);
    return static_cast<std::int64_t>(ru.ru_maxrss) * 1024;
}

namespace {
const char* kUtm30nWkt =
    "PROJCS[\"WGS 84 / UTM zone 30N\",GEOGCS[\"WGS 84\",DATUM[\"WGS_1984\",SPHEROID[\"WGS 84\","
    "6378137,298.257223563]],PRIMEM[\"Greenwich\",0],UNIT[\"degree\",0.0174532925199433]],"
    "PROJECTION[\"Transverse_Mercator\"],PARAMETER[\"latitude_of_origin\",0],"
    "PARAMETER[\"central_meridian\",-3],PARAMETER[\"scale_factor\",0.9996],"
    "PARAMETER[\"false_easting\",500000],PARAMETER[\"false_northing\",0],UNIT[\"metre\",1],"
    "AUTHORITY[\"EPSG\",\"32630\"]]";
}

void writeFractalDem(const std::string& path, int size, double cell_m, std::uint64_t seed) {
    FractalSpec spec;
    spec.width = spec.height = size;
    spec.seed = seed;
    Grid<float> z = fractalTerrain(spec);
    RasterSpec rs;
    rs.path = path;
    rs.width = rs.height = size;
    rs.type = PixelType::Float32;
    rs.nodata = -32768;
    rs.geotransform = {400000.0, cell_m, 0.0, 5600000.0, 0.0, -cell_m};
    rs.crs_wkt = kUtm30nWkt;
    rs.unit_type = "m";
    std::remove(path.c_str());
    RasterWriter w(rs);
    w.writeBand(1, z.data());
    w.commit();
}

double ioFloorSeconds(const std::string& dem_path, int repeats) {
    std::vector<double> times;
    std::string out = dem_path + ".iofloor.tif";
    for (int i = 0; i < repeats; ++i) {
        std::remove(out.c_str());
        times.push_back(timeIt([&] {
            Dem dem = readDem(dem_path);
            Grid<std::uint8_t> g(dem.z.width(), dem.z.height(), 1);
            RasterSpec rs;
            rs.path = out;
            rs.width = g.width();
            rs.height = g.height();
            rs.type = PixelType::Byte;
            rs.nodata = 255;
            rs.geotransform = dem.geometry.geotransform();
            rs.crs_wkt = dem.crs.wkt;
            RasterWriter w(rs);
            w.writeBand(1, g.data());
            w.commit();
        }));
    }
    std::remove(out.c_str());
    return median(times);
}

}  // namespace lookfar::bench
