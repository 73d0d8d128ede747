// The Review screen's worker: takes summarised off the UI thread, kept by file (size and modification time) and set,
// so a restart serves them from the saved file and a changed file is analysed again; the cache file reads back and
// a damaged one is never trusted.
//
// Sources: the takes are generated (tests/mix_signals.h) with known notes; the counts are the notes sung; a file's
// modification time as POSIX stat(2) gives it, moved with utimes(2).
#include "tests/cli.h"
#include "tests/mix_signals.h"
#include "tests/take_fixture.h"
#include "ui/session/review_worker.h"
#include "ui/session/take_summaries.h"

#include <doctest/doctest.h>

#include <sys/time.h>
#include <cmath>
#include <fstream>
#include <sstream>
#include <string>

using beatless::test::TempDir;
namespace ui = beatless::ui;
using namespace beatless::testsig;

namespace {
constexpr double kFs = 44100.0;

std::string slurp(const std::string& path) {
    std::ifstream f(path);
    std::stringstream ss;
    ss << f.rdbuf();
    return ss.str();
}
}  // namespace

TEST_CASE("summaries: the text reads back; lines that do not read are dropped; another stamp is not a match") {
    ui::TakeSummaries a;
    ui::TakeStamp s{123456, 1796314502000000000, "7-limit"};
    a.put("/takes/one.flac", s, ui::TakeSummary{3, -1.5});
    a.put("/takes/two.flac", s, ui::TakeSummary{0, NAN});
    ui::TakeSummaries b;
    CHECK(b.parse(a.text() + "12\tx\t3\t1.0\t7-limit\t/takes/bad.flac\n1\t2\t-4\tnan\tset\t/neg.flac\n"
                             "1\t2\t3\n") == 3);
    CHECK(b.size() == 2);
    const auto one = b.find("/takes/one.flac", s);
    REQUIRE(one);
    CHECK(one->notes == 3);
    CHECK(one->mean_dev_cents == doctest::Approx(-1.5).epsilon(1e-9));
    const auto two = b.find("/takes/two.flac", s);
    REQUIRE(two);
    CHECK(std::isnan(two->mean_dev_cents));
    CHECK(!b.find("/takes/one.flac", ui::TakeStamp{123457, s.mtime_ns, s.set}));
    CHECK(!b.find("/takes/one.flac", ui::TakeStamp{s.size_bytes, s.mtime_ns + 1, s.set}));
    CHECK(!b.find("/takes/one.flac", ui::TakeStamp{s.size_bytes, s.mtime_ns, "tritones"}));
    ui::TakeSummaries c;
    CHECK(c.parse("some other format\n1\t2\t3\t1.0\tset\t/p.flac\n") == 1);
    CHECK(c.size() == 0);
}

TEST_CASE("the worker summarises listed takes, saves them, and a restart serves them until a file changes") {
    TempDir dir;
    const Take three = drone_and_voice(kFs, 110.0, {{7.0 / 5.0, 4.0}, {3.0 / 2.0, -6.0}, {5.0 / 4.0, 2.0}}, 3);
    const Take one = drone_and_voice(kFs, 110.0, {{7.0 / 5.0, -3.0}}, 4);
    const std::string a =
        beatless::test::write_test_take(dir.path(), "2026-12-03_100000", three.samples, kFs, three.dur_s)
            .audio_path.string();
    const std::string b = beatless::test::write_test_take(dir.path(), "2026-12-03_110000", one.samples, kFs, one.dur_s)
                              .audio_path.string();
    const std::string cache = dir.file(".review-cache");
    {
        ui::ReviewWorker w(cache);
        w.summarise({b, a}, "7-limit");
        w.wait_idle();
        const ui::ListedSummary sa = w.summary(a), sb = w.summary(b);
        REQUIRE(sa.state == ui::ListedSummary::State::known);
        REQUIRE(sb.state == ui::ListedSummary::State::known);
        CHECK(sa.summary.notes == 3);
        CHECK(sb.summary.notes == 1);
        CHECK(sa.summary.mean_dev_cents == doctest::Approx(0.0).epsilon(0.02).scale(1.0));  // (4 - 6 + 2) / 3
        CHECK(sb.summary.mean_dev_cents == doctest::Approx(-3.0).epsilon(0.5 / 3.0));
        CHECK(w.summary(dir.file("never.flac")).state == ui::ListedSummary::State::reading);
    }
    // The file holds both; mark take a's line with a count no analysis gives (7), to see where a restart reads it.
    std::string text = slurp(cache);
    const auto at = text.find("\t3\t", text.find('\n'));
    REQUIRE(at != std::string::npos);
    text.replace(at, 3, "\t7\t");
    std::ofstream(cache) << text;
    {
        ui::ReviewWorker w(cache);
        w.summarise({b, a}, "7-limit");
        w.wait_idle();
        CHECK(w.summary(a).summary.notes == 7);  // served from the file: not analysed again
        CHECK(w.summary(b).summary.notes == 1);
    }
    // A changed file (its modification time moved) is analysed again.
    struct timeval tv[2];
    tv[0].tv_sec = tv[1].tv_sec = std::time(nullptr) - 100;
    tv[0].tv_usec = tv[1].tv_usec = 0;
    REQUIRE(::utimes(a.c_str(), tv) == 0);
    {
        ui::ReviewWorker w(cache);
        w.summarise({a}, "7-limit");
        w.wait_idle();
        CHECK(w.summary(a).summary.notes == 3);
    }
    // A file that does not read is shown so, and kept out of the cache.
    std::ofstream(dir.file("2026-12-03_120000.flac")) << "not a sound file";
    ui::ReviewWorker w(cache);
    w.summarise({dir.file("2026-12-03_120000.flac")}, "7-limit");
    w.wait_idle();
    CHECK(w.summary(dir.file("2026-12-03_120000.flac")).state == ui::ListedSummary::State::unreadable);
}

TEST_CASE("the worker opens a take first; a newer open replaces an older one; the opened take is handed over once") {
    TempDir dir;
    const Take t1 = drone_and_voice(kFs, 110.0, {{7.0 / 5.0, 4.0}}, 5);
    const Take t2 = drone_and_voice(kFs, 110.0, {{3.0 / 2.0, -6.0}, {5.0 / 4.0, 2.0}}, 6);
    const std::string p1 =
        beatless::test::write_test_take(dir.path(), "t1", t1.samples, kFs, t1.dur_s).audio_path.string();
    const std::string p2 =
        beatless::test::write_test_take(dir.path(), "t2", t2.samples, kFs, t2.dur_s).audio_path.string();
    ui::ReviewWorker w("");
    w.summarise({p1, p2}, "7-limit");
    w.open(p1, "7-limit");
    w.open(p2, "7-limit");
    w.wait_idle();
    const auto opened = w.opened();
    REQUIRE(opened);
    CHECK(opened->path == p2);
    CHECK(opened->analysis.notes.size() == 2);
    CHECK(!w.opened());  // handed over once
    CHECK(w.summary(p1).summary.notes == 1);
}
