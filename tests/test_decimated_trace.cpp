// DecimatedTrace against a direct computation of the same bucket statistics.
//
// Source: the bucket mean, minimum and maximum are defined in
// pitch/measure/decimated_trace.h; the test recomputes them straight from the
// frames (no merging) for the bucket length the trace ends with, so every
// merge must preserve them exactly (up to rounding). Memory stays at
// max_points whatever the length (common practice for long-file plots).
#include "pitch/base/error.h"
#include "pitch/measure/decimated_trace.h"
#include "tests/mix_signals.h"

#include <doctest/doctest.h>

#include <cmath>
#include <map>
#include <random>

using namespace beatless;
using namespace beatless::pitch;

TEST_CASE("buckets hold the mean, min and max of their voiced frames, through every merge") {
    for (double dur : {3.0, 41.0, 700.0}) {
        CAPTURE(dur);
        DecimatedTrace tr({.bucket_s = 0.01, .max_points = 512});
        std::mt19937_64 rng(5);
        std::uniform_real_distribution<double> u(0.0, 1.0);
        struct Frame {
            double t, c;
            bool v;
        };
        std::vector<Frame> frames;
        for (double t = 0.0; t < dur; t += 0.005) {
            const Frame f{t, 1700.0 + 100.0 * std::sin(t) + 10.0 * u(rng), u(rng) > 0.3 && std::fmod(t, 7.0) < 5.0};
            frames.push_back(f);
            tr.push(f.t, f.c, f.v);
        }
        CHECK(tr.size() <= 512);
        CHECK(tr.size() >= 256);
        const double b = tr.bucket_s();
        CHECK(b * 512 >= dur);
        struct Acc {
            int n = 0;
            double sum = 0, lo = INFINITY, hi = -INFINITY;
        };
        std::map<std::size_t, Acc> direct;
        for (const Frame& f : frames) {
            if (!f.v) continue;
            Acc& a = direct[static_cast<std::size_t>(f.t / b)];
            ++a.n;
            a.sum += f.c;
            a.lo = std::min(a.lo, f.c);
            a.hi = std::max(a.hi, f.c);
        }
        int checked = 0;
        for (std::size_t i = 0; i < tr.size(); ++i) {
            const TracePoint& p = tr[i];
            CHECK(p.t_s == doctest::Approx((static_cast<double>(i) + 0.5) * b));
            const auto it = direct.find(i);
            if (it == direct.end()) {
                CHECK(p.frames == 0);
                continue;
            }
            CHECK(p.frames == it->second.n);
            CHECK(p.mean_cents == doctest::Approx(it->second.sum / it->second.n).epsilon(1e-12));
            CHECK(p.min_cents == it->second.lo);
            CHECK(p.max_cents == it->second.hi);
            ++checked;
        }
        CHECK(checked > 100);
    }
}

TEST_CASE("bad settings throw; bad times are ignored") {
    CHECK(testsig::error_of<Error>([] { DecimatedTrace({.bucket_s = 0.0}); }) ==
          "decimated trace: bucket_s must be in (0, 60] s");
    CHECK(testsig::error_of<Error>([] { DecimatedTrace({.max_points = 7}); }) ==
          "decimated trace: max_points must be even and at least 2");
    DecimatedTrace tr;
    tr.push(-1.0, 100.0, true);
    tr.push(NAN, 100.0, true);
    CHECK(tr.size() == 0);
    tr.push(0.5, NAN, true);  // voiced but not a number: time passes, no point
    CHECK(tr.size() == 51);
    CHECK(tr[50].frames == 0);
}
