// Benchmark section `log`: the practice log's write and history paths.
//
// (1) One attempt with a typical trace (30 s of readings at a 5 ms hop =
//     6000 records, 96 KB) committed in its own transaction, WAL mode,
//     synchronous = FULL: median and p95 per attempt. Bar: under 5 ms.
// (2) `beatless history` over 100,000 attempts: the log is built first
//     (short traces, so the file stays small; history never reads them),
//     then the command's query path is timed as it runs: open the file,
//     summarise (pitch-ordered totals, weekly buckets), render text; also
//     with --target and as JSON. Bar: under 0.5 s.
// Times are thread CPU time (the machine is shared); wall time is printed
// beside it, since fsync waits do not show as CPU time.
#include "tests/bench/bench.h"
#include "ui/session/log_summary.h"
#include "ui/session/practice_log.h"
#include "ui/session/rng.h"

#include <unistd.h>
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <string>
#include <vector>

namespace {

using namespace beatless;
using namespace beatless::ui;
namespace fs = std::filesystem;

double wall_s() {
    using namespace std::chrono;
    return duration<double>(steady_clock::now().time_since_epoch()).count();
}

const char* kTargets[] = {"8/7",  "7/6",   "6/5",   "5/4",   "9/7",   "4/3",  "15/11", "11/8",    "7/5",      "45/32",
                          "600c", "64/45", "10/7",  "16/11", "3/2",   "14/9", "8/5",   "5/3",     "12/7",     "7/4",
                          "9/8",  "11/9",  "14/11", "11/7",  "18/11", "13/8", "15/8",  "729/512", "1024/729", "2/1"};

Attempt make_attempt(ui::Rng& rng, long index, std::size_t records, long days) {
    Attempt a;
    const long day = static_cast<long>(rng.below(static_cast<std::uint64_t>(days)));
    const int sec = static_cast<int>(rng.below(86400));
    // Days from 2023-01-01, as a date string (30-day months are enough for a spread).
    const int y = 2023 + static_cast<int>(day / 360), m = 1 + static_cast<int>(day % 360 / 30),
              d = 1 + static_cast<int>(day % 30);
    char when[64];
    std::snprintf(when, sizeof when, "%04d-%02d-%02dT%02d:%02d:%02d.%03dZ", y, m, std::min(d, 28), sec / 3600,
                  sec / 60 % 60, sec % 60, static_cast<int>(index % 1000));
    a.started_at = when;
    a.kind = index % 10 == 9 ? AttemptKind::ear : AttemptKind::hold;
    a.drill = a.kind == AttemptKind::ear ? "ear-tritones" : "hold-tritones";
    a.target = a.kind == AttemptKind::ear ? "11/8 7/5 45/32 600c 10/7" : kTargets[rng.below(std::size(kTargets))];
    a.root_hz = 110.0;
    a.settings_json = R"({"drill": "hold-tritones", "hold_s": 4, "tolerance_cents": 8, "dwell_s": 0.3})";
    a.dur_s = 4.0;
    if (a.kind == AttemptKind::hold) {
        a.locked = rng.below(4) != 0;
        if (*a.locked) a.time_to_lock_s = 2.0 * rng.uniform();
        a.mean_dev_cents = 20.0 * rng.uniform() - 10.0;
        a.spread_cents = 8.0 * rng.uniform();
        a.in_tolerance_share = rng.uniform();
    } else {
        a.threshold_cents = 5.0 + 25.0 * rng.uniform();
        a.trials = 60;
        a.correct_share = 0.7;
    }
    a.trace.resize(records);
    for (std::size_t i = 0; i < records; ++i)
        a.trace[i] = {0.005f * static_cast<float>(i), 154.0f, static_cast<float>(rng.uniform() * 10 - 5), 0.5f};
    return a;
}

void bench_write(bool quick, const fs::path& dir) {
    const int n = quick ? 30 : 200;
    PracticeLog log(dir / "write.sqlite3");
    ui::Rng rng(1);
    std::vector<Attempt> attempts;
    for (int i = 0; i < n; ++i) attempts.push_back(make_attempt(rng, i, 6000, 30));
    std::vector<double> cpu_ms, wall_ms;
    for (Attempt& a : attempts) {
        const double c0 = bench::thread_cpu_s(), w0 = wall_s();
        log.add(a);
        cpu_ms.push_back(1e3 * (bench::thread_cpu_s() - c0));
        wall_ms.push_back(1e3 * (wall_s() - w0));
    }
    const double med = bench::percentile(cpu_ms, 50), p95 = bench::percentile(cpu_ms, 95);
    std::printf("write one attempt, 6000-record trace (96 KB), %d attempts\n", n);
    std::printf("  %-22s %10s %10s\n", "", "median", "p95");
    std::printf("  %-22s %8.3f ms %7.3f ms\n", "thread CPU", med, p95);
    std::printf("  %-22s %8.3f ms %7.3f ms\n", "wall (incl. fsync)", bench::percentile(wall_ms, 50),
                bench::percentile(wall_ms, 95));
    std::printf("  bar: CPU median under 5 ms ... %s\n", med < 5.0 ? "pass" : "FAIL");
}

void bench_history(bool quick, const fs::path& dir) {
    const long n = quick ? 10000 : 100000;
    const fs::path db = dir / "history.sqlite3";
    const double b0 = wall_s();
    {
        PracticeLog log(db);
        ui::Rng rng(2);
        const long batch = 10000;
        for (long start = 0; start < n; start += batch) {
            std::vector<Attempt> v;
            for (long i = start; i < std::min(n, start + batch); ++i) v.push_back(make_attempt(rng, i, 16, 720));
            log.add_all(v);
        }
    }
    std::error_code ec;
    std::printf("\nhistory over %ld attempts (30 targets + 1 ear drill over 2 years; log %.1f MB, built in %.1f s)\n",
                n, static_cast<double>(fs::file_size(db, ec)) / 1e6, wall_s() - b0);
    struct Case {
        const char* what;
        HistoryOptions options;
        bool json;
    };
    const Case cases[] = {
        {"history (text, by week)", {{}, Period::week}, false},
        {"history --format json", {{}, Period::week}, true},
        {"history --target 7/5", {{"7/5", "", ""}, Period::week}, false},
        {"history --since 2024-06-01 --by day", {{"", "2024-06-01", ""}, Period::day}, false},
    };
    std::printf("  %-38s %10s %10s %8s\n", "", "CPU", "wall", "output");
    double worst = 0.0;
    for (const Case& c : cases) {
        std::vector<double> cpu, wall;
        std::size_t out_len = 0;
        for (int rep = 0; rep < (quick ? 2 : 5); ++rep) {
            const double c0 = bench::thread_cpu_s(), w0 = wall_s();
            PracticeLog log(db);
            const HistorySummary s = summarize_history(log, c.options);
            const std::string out = c.json ? render_history_json(s) : render_history_text(s);
            out_len = out.size();
            cpu.push_back(bench::thread_cpu_s() - c0);
            wall.push_back(wall_s() - w0);
        }
        const double med = bench::percentile(cpu, 50);
        worst = std::max(worst, med);
        std::printf("  %-38s %8.3f s %8.3f s %6zu kB\n", c.what, med, bench::percentile(wall, 50), out_len / 1000);
    }
    std::printf("  bar: every case under 0.5 s CPU (median of runs) ... %s\n", worst < 0.5 ? "pass" : "FAIL");
}

void run_log(bench::Context& ctx) {
    const fs::path dir = fs::temp_directory_path() / ("beatless-bench-log-" + std::to_string(::getpid()));
    fs::remove_all(dir);
    fs::create_directories(dir);
    bench_write(ctx.quick, dir);
    bench_history(ctx.quick, dir);
    if (!std::getenv("BEATLESS_BENCH_KEEP"))
        fs::remove_all(dir);
    else
        std::printf("kept %s\n", dir.c_str());
}

}  // namespace

BEATLESS_BENCH_SECTION("log", "practice log: one attempt's commit; history over 100,000 attempts", run_log);
