#include "GdalSupport.hpp"

#include <cpl_error.h>
#include <gdal.h>

#include <mutex>

namespace lookfar::io_detail {

namespace {
void CPL_STDCALL quietHandler(CPLErr, CPLErrorNum, const char*) {}
}  // namespace

void ensureGdal() {
    static std::once_flag once;
    std::call_once(once, [] {
        GDALAllRegister();
        CPLSetErrorHandler(quietHandler);
    });
}

std::string lastGdalError() {
    const char* msg = CPLGetLastErrorMsg();
    std::string text = msg ? msg : "";
    CPLErrorReset();
    return text;
}

}  // namespace lookfar::io_detail
