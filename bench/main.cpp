// lookfar_bench NAME [--quick] [--out FILE] [--cli PATH] [--work DIR] [args…]
// Writes the figures of one benchmark as JSON (stdout, or --out FILE).
#include <cstdio>
#include <fstream>
#include <iostream>
#include <map>

#include "Bench.hpp"
#include "lookfar/Version.hpp"
#include "lookfar/core/Errors.hpp"

int main(int argc, char** argv) {
    using namespace lookfar::bench;
    std::map<std::string, nlohmann::json (*)(const BenchArgs&)> benches = {
        {"viewshed", benchViewshed},
        {"horizon", benchHorizon},
        {"intervis", benchIntervis},
        {"scale", benchScale},
        {"signal", benchSignal}};
    if (argc < 2 || !benches.count(argv[1])) {
        std::cerr
            << "usage: lookfar_bench viewshed|horizon|intervis|scale|signal [--quick] [--out FILE] "
               "[--cli PATH] [--work DIR]\n";
        return 2;
    }
    BenchArgs args;
    std::string out_path;
    args.work_dir = "bench-work";
    for (int i = 2; i < argc; ++i) {
        std::string a = argv[i];
        if (a == "--quick") {
            args.quick = true;
        } else if (a == "--out" && i + 1 < argc) {
            out_path = argv[++i];
        } else if (a == "--cli" && i + 1 < argc) {
            args.cli_path = argv[++i];
        } else if (a == "--work" && i + 1 < argc) {
            args.work_dir = argv[++i];
        } else {
            args.args.push_back(a);
        }
    }
    std::string mk = "mkdir -p '" + args.work_dir + "'";
    if (std::system(mk.c_str()) != 0)
        return 4;
    try {
        nlohmann::json j = benches[argv[1]](args);
        j["benchmark"] = argv[1];
        j["lookfar_version"] = lookfar::kVersion;
        if (out_path.empty()) {
            std::cout << j.dump(2) << "\n";
        } else {
            std::ofstream(out_path) << j.dump(2) << "\n";
            std::cerr << "lookfar_bench: figures written to " << out_path << "\n";
        }
    } catch (const std::exception& e) {
        std::cerr << "lookfar_bench: " << e.what() << "\n";
        return 1;
    }
    return 0;
}
