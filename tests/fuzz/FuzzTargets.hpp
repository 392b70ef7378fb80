#pragma once
// The fuzz targets of lookfar's text parsers (issue 12 item 19). Each takes any bytes and checks
// that the parser returns a valid result or throws one of lookfar's input errors with a short,
// escaped message; anything else (another exception, a broken invariant) aborts. The libFuzzer
// entry points (fuzz_<target>.cpp) call them; FuzzCorpusTest runs the seed corpus through them
// in the ordinary test suite.
#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

namespace lookfar::fuzz {

using Target = int (*)(const std::uint8_t* data, std::size_t size);

int sitesCsv(const std::uint8_t* data, std::size_t size);        ///< parseSitesCsv, csvField
int point(const std::uint8_t* data, std::size_t size);           ///< parsePoint "X,Y"
int length(const std::uint8_t* data, std::size_t size);          ///< lengths, numbers, echoText
int creationOption(const std::uint8_t* data, std::size_t size);  ///< --co KEY=VALUE
int crs(const std::uint8_t* data, std::size_t size);             ///< --crs through PROJ

/// Every target with the name of its folder under tests/fuzz/corpus/.
struct NamedTarget {
    const char* name;
    Target run;
};
const std::vector<NamedTarget>& allTargets();

}  // namespace lookfar::fuzz
