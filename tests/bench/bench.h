// beatless-bench — the benchmark program (built, not run by ctest).
//
// Each section lives in its own bench_<name>.cpp and registers itself with
// BEATLESS_BENCH_SECTION. `beatless-bench` runs every section; `beatless-bench
// yin draw` runs the named ones; `--quick` shortens each for a smoke run.
// Speed is measured as thread CPU time, so figures hold on a busy machine.
#pragma once

#include <cstdio>
#include <functional>
#include <string>
#include <vector>

namespace beatless::bench {

struct Context {
    bool quick = false;  // fewer cases, for a smoke run
};

struct Section {
    std::string name;  // "yin"
    std::string what;  // one line for the listing
    std::function<void(Context&)> run;
};

std::vector<Section>& sections();

struct Registrar {
    Registrar(std::string name, std::string what, std::function<void(Context&)> run) {
        sections().push_back({std::move(name), std::move(what), std::move(run)});
    }
};

// Seconds of CPU time used by the calling thread.
double thread_cpu_s();

// Median and percentile of a sample (copied and sorted).
double percentile(std::vector<double> v, double p);  // p in 0..100

}  // namespace beatless::bench

#define BEATLESS_BENCH_CAT2(a, b) a##b
#define BEATLESS_BENCH_CAT(a, b) BEATLESS_BENCH_CAT2(a, b)
#define BEATLESS_BENCH_SECTION(name, what, fn) \
    static ::beatless::bench::Registrar BEATLESS_BENCH_CAT(bench_registrar_, __LINE__) { name, what, fn }
