#include <sys/resource.h>

#include <algorithm>
#include <cstdio>

#include "Bench.hpp"
#include "lookfar/core/FractalTerrain.hpp"
#include "lookfar/io/Dem.hpp"
#include "lookfar/io/RasterWriter.hpp"

namespace lookfar::bench {

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
