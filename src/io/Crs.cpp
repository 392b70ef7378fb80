#include "lookfar/io/Crs.hpp"

#include <geodesic.h>
#include <proj.h>

#include <cmath>
#include <cstdio>
#include <cstdlib>

#include "lookfar/core/Errors.hpp"
#include "lookfar/core/Text.hpp"
#include "lookfar/core/Units.hpp"

namespace lookfar {

MapPoint parsePoint(const std::string& text, const std::string& what) {
    const auto comma = text.find(',');
    if (comma == std::string::npos || text.find(',', comma + 1) != std::string::npos) {
        throw UsageError(what + ": '" + echoText(text) +
                         "' is not a point; write X,Y (e.g. 431250,5612400)");
    }
    auto number = [&](const std::string& part) {
        const std::string t = trim(part);
        const auto v = parseDecimal(t);
        if (!v) {
            throw UsageError(what + ": '" + echoText(text) + "' is not a point; '" + echoText(t) +
                             "' is not a finite decimal number");
        }
        return *v;
    };
    return {number(text.substr(0, comma)), number(text.substr(comma + 1))};
}

std::string crsAsPROJUnderstandsIt(const std::string& text) {
    // A PROJ string describes an operation unless it says +type=crs; users write it without.
    const bool proj_string =
        trim(text).rfind('+', 0) == 0 || text.find("+proj=") != std::string::npos;
    if (proj_string && text.find("+type=crs") == std::string::npos)
        return text + " +type=crs";
    return text;
}

namespace {

// PROJ contexts are not thread-safe; each object owns its own.
struct Ctx {
    PJ_CONTEXT* ctx = proj_context_create();
    ~Ctx() { proj_context_destroy(ctx); }
};

PJ* createCrs(PJ_CONTEXT* ctx, const std::string& text) {
    proj_log_level(ctx, PJ_LOG_NONE);
    PJ* pj = proj_create(ctx, crsAsPROJUnderstandsIt(text).c_str());
    if (!pj)
        return nullptr;
    PJ_TYPE t = proj_get_type(pj);
    bool is_crs = t == PJ_TYPE_GEOGRAPHIC_2D_CRS || t == PJ_TYPE_GEOGRAPHIC_3D_CRS ||
                  t == PJ_TYPE_PROJECTED_CRS || t == PJ_TYPE_COMPOUND_CRS ||
                  t == PJ_TYPE_BOUND_CRS || t == PJ_TYPE_GEOGRAPHIC_CRS || t == PJ_TYPE_OTHER_CRS;
    if (!is_crs) {
        proj_destroy(pj);
        return nullptr;
    }
    return pj;
}

}  // namespace

struct CoordinateTransform::Impl {
    Ctx ctx;
    PJ* pj = nullptr;
    ~Impl() {
        if (pj)
            proj_destroy(pj);
    }
};

CoordinateTransform::CoordinateTransform(const std::string& from, const std::string& to)
    : impl_(std::make_unique<Impl>()) {
    PJ_CONTEXT* c = impl_->ctx.ctx;
    PJ* src = createCrs(c, from);
    if (!src)
        throw InvalidOption(
            "crs", "'" + echoText(from) + "' is not a coordinate reference system PROJ knows");
    PJ* dst = createCrs(c, to);
    if (!dst) {
        proj_destroy(src);
        throw InputError("the DEM's coordinate reference system is not one PROJ can use");
    }
    identity_ = proj_is_equivalent_to(src, dst, PJ_COMP_EQUIVALENT) != 0;
    PJ* op = proj_create_crs_to_crs_from_pj(c, src, dst, nullptr, nullptr);
    proj_destroy(src);
    proj_destroy(dst);
    if (!op)
        throw InputError("no coordinate operation from '" + echoText(from) + "' to the DEM's CRS");
    impl_->pj = proj_normalize_for_visualization(c, op);
    proj_destroy(op);
    if (!impl_->pj)
        throw InputError("no coordinate operation from '" + echoText(from) + "' to the DEM's CRS");
}

CoordinateTransform::~CoordinateTransform() = default;

MapPoint CoordinateTransform::apply(const MapPoint& p) const {
    PJ_COORD in = proj_coord(p.x, p.y, 0, 0);
    PJ_COORD out = proj_trans(impl_->pj, PJ_FWD, in);
    if (!std::isfinite(out.xy.x) || !std::isfinite(out.xy.y) || out.xy.x == HUGE_VAL) {
        char buf[128];
        std::snprintf(buf, sizeof buf, "the point %.10g,%.10g cannot be transformed", p.x, p.y);
        throw InputError(buf);
    }
    return {out.xy.x, out.xy.y};
}

namespace {
std::string geodeticCrsOf(const std::string& crs_wkt) {
    Ctx ctx;
    PJ* crs = createCrs(ctx.ctx, crs_wkt);
    if (!crs)
        throw InputError("the DEM's coordinate reference system is not one PROJ can use");
    PJ* geo = proj_crs_get_geodetic_crs(ctx.ctx, crs);
    proj_destroy(crs);
    if (!geo)
        throw InputError("the DEM's CRS has no geodetic datum");
    const char* wkt = proj_as_wkt(ctx.ctx, geo, PJ_WKT2_2019, nullptr);
    std::string out = wkt ? wkt : "";
    proj_destroy(geo);
    return out;
}
}  // namespace

LonLatOf::LonLatOf(const std::string& crs_wkt) {
    geographic_ = crsIsGeographic(crs_wkt);
    if (!geographic_) {
        transform_ = std::make_unique<CoordinateTransform>(crs_wkt, geodeticCrsOf(crs_wkt));
    }
}
LonLatOf::~LonLatOf() = default;

MapPoint LonLatOf::apply(const MapPoint& p) const {
    if (geographic_)
        return p;
    return transform_->apply(p);
}

Ellipsoid ellipsoidOfCrs(const std::string& crs) {
    Ctx ctx;
    PJ* pj = createCrs(ctx.ctx, crs);
    if (!pj)
        throw InputError("'" + echoText(crs) + "' is not a coordinate reference system PROJ knows");
    PJ* ell = proj_get_ellipsoid(ctx.ctx, pj);
    proj_destroy(pj);
    if (!ell)
        throw InputError("the CRS '" + echoText(crs) + "' has no ellipsoid");
    double a = 0, b = 0, inv_f = 0;
    int computed = 0;
    proj_ellipsoid_get_parameters(ctx.ctx, ell, &a, &b, &computed, &inv_f);
    proj_destroy(ell);
    return Ellipsoid{a, inv_f > 0 ? 1.0 / inv_f : 0.0};
}

bool crsIsGeographic(const std::string& crs) {
    Ctx ctx;
    PJ* pj = createCrs(ctx.ctx, crs);
    if (!pj)
        return false;
    PJ_TYPE t = proj_get_type(pj);
    proj_destroy(pj);
    return t == PJ_TYPE_GEOGRAPHIC_2D_CRS || t == PJ_TYPE_GEOGRAPHIC_3D_CRS ||
           t == PJ_TYPE_GEOGRAPHIC_CRS;
}

void validateCrs(const std::string& crs, const std::string& what) {
    Ctx ctx;
    PJ* pj = createCrs(ctx.ctx, crs);
    if (!pj)
        throw UsageError(what + ": '" + echoText(crs) +
                         "' is not a coordinate reference system PROJ knows");
    proj_destroy(pj);
}

Geodesic::Geodesic(const Ellipsoid& e) : e_(e) {}

GeodesicLine Geodesic::inverse(double lon1, double lat1, double lon2, double lat2) const {
    geod_geodesic g;
    geod_init(&g, e_.a, e_.f);
    GeodesicLine line;
    geod_inverse(&g, lat1, lon1, lat2, lon2, &line.distance_m, &line.azimuth1_deg,
                 &line.azimuth2_deg);
    auto wrap = [](double az) { return az < 0 ? az + 360.0 : (az >= 360.0 ? az - 360.0 : az); };
    line.azimuth1_deg = wrap(line.azimuth1_deg);
    line.azimuth2_deg = wrap(line.azimuth2_deg);
    return line;
}

MapPoint Geodesic::direct(double lon1, double lat1, double az1_deg, double s_m) const {
    geod_geodesic g;
    geod_init(&g, e_.a, e_.f);
    double lat2 = 0, lon2 = 0, azi2 = 0;
    geod_direct(&g, lat1, lon1, az1_deg, s_m, &lat2, &lon2, &azi2);
    return {lon2, lat2};
}

}  // namespace lookfar
