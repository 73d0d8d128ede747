#include "tests/bench/bench.h"

#include <algorithm>
#include <cmath>
#include <cstring>
#include <ctime>

namespace beatless::bench {

std::vector<Section>& sections() {
    static std::vector<Section> s;
    return s;
}

double thread_cpu_s() {
    timespec ts{};
    clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
    return static_cast<double>(ts.tv_sec) + 1e-9 * static_cast<double>(ts.tv_nsec);
}

double percentile(std::vector<double> v, double p) {
    if (v.empty()) return NAN;
    std::sort(v.begin(), v.end());
    const double pos = p / 100.0 * static_cast<double>(v.size() - 1);
    const auto lo = static_cast<std::size_t>(std::floor(pos));
    const auto hi = std::min(lo + 1, v.size() - 1);
    return v[lo] + (pos - static_cast<double>(lo)) * (v[hi] - v[lo]);
}

}  // namespace beatless::bench

int main(int argc, char** argv) {
    using namespace beatless::bench;
    Context ctx;
    std::vector<std::string> wanted;
    for (int i = 1; i < argc; ++i) {
        if (std::strcmp(argv[i], "--quick") == 0)
            ctx.quick = true;
        else if (std::strcmp(argv[i], "--list") == 0) {
            for (const auto& s : sections()) std::printf("%-10s %s\n", s.name.c_str(), s.what.c_str());
            return 0;
        } else if (argv[i][0] == '-') {
            std::fprintf(stderr, "beatless-bench: unknown option '%s' (use --quick, --list or section names)\n",
                         argv[i]);
            return 2;
        } else
            wanted.emplace_back(argv[i]);
    }
    for (const auto& w : wanted) {
        const bool known =
            std::any_of(sections().begin(), sections().end(), [&](const Section& s) { return s.name == w; });
        if (!known) {
            std::fprintf(stderr, "beatless-bench: no section '%s' (see --list)\n", w.c_str());
            return 2;
        }
    }
    for (auto& s : sections()) {
        if (!wanted.empty() && std::find(wanted.begin(), wanted.end(), s.name) == wanted.end()) continue;
        std::printf("== %s: %s ==\n", s.name.c_str(), s.what.c_str());
        std::fflush(stdout);
        s.run(ctx);
        std::printf("\n");
    }
    return 0;
}
