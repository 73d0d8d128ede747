// beatless-bench section "yin": accuracy and speed of the pitch tracker.
//
// Signals come from tests/signals.h with exactly known f0. Error is
// |1200 log2(f0_est / f0_true)| per frame (no smoothing: every frame's
// estimate depends on at most span_s = 50 ms of audio). A gross error is an
// error over 50 cents or a voiced frame reported unvoiced. The Cramer-Rao
// bound (CRB) for a real harmonic tone in white Gaussian noise over the 50 ms
// span, var(w0) >= 24 s^2 / (N^3 sum l^2 A_l^2) (M. G. Christensen and
// A. Jakobsson, Multi-Pitch Estimation, 2009), is printed in cents beside
// each noisy figure. Speed is thread CPU time of push() + pull().
#include "tests/bench/bench.h"

#include "pitch/dsp/yin.h"
#include "tests/signals.h"

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <random>
#include <vector>

using namespace beatless;

namespace {

constexpr double kRate = 44100.0;
constexpr double kGrossCents = 50.0;

struct Stats {
    std::vector<double> err;  // cents, voiced frames that should be voiced
    std::vector<double> crb;  // cents, one per case
    std::size_t frames = 0, gross = 0;
    void add(const Stats& o) {
        err.insert(err.end(), o.err.begin(), o.err.end());
        crb.insert(crb.end(), o.crb.begin(), o.crb.end());
        frames += o.frames;
        gross += o.gross;
    }
};

// Runs the tracker over x and scores every frame against truth(t).
template <class Truth>
void score(const std::vector<float>& x, Truth truth, Stats& s) {
    pitch::YinTracker yin(pitch::YinConfig{});
    pitch::PitchFrame p;
    for (std::size_t i = 0; i < x.size(); i += 512) {
        yin.push(std::span<const float>(x).subspan(i, std::min<std::size_t>(512, x.size() - i)));
        while (yin.pull(p)) {
            ++s.frames;
            if (!p.voiced()) {
                ++s.gross;
                continue;
            }
            const double e = std::fabs(test::cents(p.f0_hz, truth(p.t_s)));
            if (e > kGrossCents) ++s.gross;
            s.err.push_back(e);
        }
    }
}

double log_uniform(std::mt19937_64& rng, double lo, double hi) {
    std::uniform_real_distribution<double> u(std::log(lo), std::log(hi));
    return std::exp(u(rng));
}

void print_header() {
    std::printf("%-28s %6s %7s %10s %10s %8s %10s %10s  %s\n", "class", "cases", "frames", "median_c", "p95_c",
                "gross_%", "CRB_med_c", "bar", "ok");
}

void print_row(const char* name, std::size_t cases, const Stats& s, double crb, const char* bar_text, bool ok) {
    const double med = bench::percentile(s.err, 50), p95 = bench::percentile(s.err, 95);
    const double gross = s.frames ? 100.0 * static_cast<double>(s.gross) / static_cast<double>(s.frames) : NAN;
    char crb_text[32] = "-";
    if (!std::isnan(crb)) std::snprintf(crb_text, sizeof crb_text, "%.4f", crb);
    std::printf("%-28s %6zu %7zu %10.4f %10.4f %8.3f %10s %10s  %s\n", name, cases, s.frames, med, p95, gross, crb_text,
                bar_text, ok ? "yes" : "NO");
}

// Steady harmonic tones at log-uniform random f0 in [lo, hi], random phases.
Stats steady(std::mt19937_64& rng, int cases, double lo, double hi, double snr_db, double len_s) {
    Stats s;
    for (int c = 0; c < cases; ++c) {
        const double f0 = log_uniform(rng, lo, hi);
        const auto parts = test::falling_partials(f0, kRate, 20, 6.0, rng());
        auto x = test::harmonic_tone(kRate, static_cast<std::size_t>(len_s * kRate), f0, parts);
        if (snr_db < 200.0) {
            const double var = test::add_white_noise(x, test::harmonic_power(parts), snr_db, rng());
            s.crb.push_back(test::harmonic_crb_cents(parts, f0, kRate, var, static_cast<std::size_t>(0.05 * kRate)));
        }
        score(
            x, [f0](double) { return f0; }, s);
    }
    return s;
}

void run(bench::Context& ctx) {
    std::mt19937_64 rng(20240611);
    const int cases = ctx.quick ? 24 : 240;
    const double len_s = 0.25;
    std::printf(
        "tones: harmonic, partial amplitudes falling 6 dB/octave (a_l = a_1 / l), up to 20 partials below\n"
        "0.9 x Nyquist, random phases, peak 0.5; f0 log-uniform at random; %.2f s each at %.0f Hz, pushed in\n"
        "blocks of 512; default YinConfig (span 50 ms, hop %.2f ms). Errors per frame in cents; gross = error\n"
        "> 50 cents or unvoiced. CRB = Cramer-Rao bound (std. dev.) for the 50 ms span, median over the cases.\n\n",
        len_s, kRate, 1e3 * pitch::YinTracker(pitch::YinConfig{}).hop_s());
    print_header();

    // Clean.
    {
        const Stats s = steady(rng, cases, 65.0, 1000.0, 1e9, len_s);
        const bool ok = bench::percentile(s.err, 50) <= 0.05 && bench::percentile(s.err, 95) <= 0.1;
        print_row("clean 65-1000 Hz", static_cast<std::size_t>(cases), s, NAN, "0.05/0.1", ok);
    }
    // 20 dB, by octave band: median <= max(0.1, 1.5 CRB).
    {
        const double bands[][2] = {{65, 130}, {130, 260}, {260, 520}, {520, 1000}};
        Stats all;
        bool all_ok = true;
        for (const auto& b : bands) {
            const Stats s = steady(rng, cases / 4, b[0], b[1], 20.0, len_s);
            const double crb = bench::percentile(s.crb, 50);
            const double bar = std::max(0.1, 1.5 * crb);
            const bool ok = bench::percentile(s.err, 50) <= bar;
            all_ok = all_ok && ok;
            char name[64], bar_text[32];
            std::snprintf(name, sizeof name, "20 dB SNR %4.0f-%4.0f Hz", b[0], b[1]);
            std::snprintf(bar_text, sizeof bar_text, "%.4f", bar);
            print_row(name, static_cast<std::size_t>(cases / 4), s, crb, bar_text, ok);
            all.add(s);
        }
        print_row("20 dB SNR 65-1000 Hz (all)", static_cast<std::size_t>(cases / 4 * 4), all,
                  bench::percentile(all.crb, 50), "per band", all_ok);
    }
    // 10 dB: gross errors <= 1%.
    {
        const Stats s = steady(rng, cases, 65.0, 1000.0, 10.0, len_s);
        const bool ok = 100.0 * static_cast<double>(s.gross) / static_cast<double>(s.frames) <= 1.0;
        print_row("10 dB SNR 65-1000 Hz", static_cast<std::size_t>(cases), s, bench::percentile(s.crb, 50), "gross<=1%",
                  ok);
    }
    // Steady tones outside the bar's range, for information.
    {
        const Stats s = steady(rng, cases / 4, 1000.0, 1500.0, 1e9, len_s);
        print_row("clean 1000-1500 Hz (info)", static_cast<std::size_t>(cases / 4), s, NAN, "-", true);
    }
    // Vibrato: 5-6.5 Hz, +-20..60 cents, centre 110-880 Hz, scored against f0(t) at the frame's t.
    {
        Stats s;
        std::uniform_real_distribution<double> rate(5.0, 6.5), depth(20.0, 60.0), ph(0.0, 6.283185307179586);
        for (int c = 0; c < cases / 2; ++c) {
            test::Vibrato v{log_uniform(rng, 110.0, 880.0), depth(rng), rate(rng), ph(rng)};
            const auto parts =
                test::falling_partials(v.centre_hz * std::exp2(v.depth_cents / 1200.0), kRate, 20, 6.0, rng());
            const auto x = test::vibrato_tone(kRate, static_cast<std::size_t>(0.5 * kRate), v, parts);
            score(
                x, [&](double t) { return v.f0_hz(t); }, s);
        }
        print_row("vibrato 5-6.5 Hz +-20-60 c", static_cast<std::size_t>(cases / 2), s, NAN, "(info)", true);
    }
    // Glides linear in cents, +-100..1200 cents/s.
    {
        Stats s;
        std::uniform_real_distribution<double> speed(100.0, 1200.0);
        for (int c = 0; c < cases / 2; ++c) {
            const double cps = speed(rng) * (c % 2 ? 1.0 : -1.0);
            test::Glide g{log_uniform(rng, 150.0, 600.0), cps};
            const double hi = std::max(g.f0_hz(0.0), g.f0_hz(0.5));
            const auto parts = test::falling_partials(hi, kRate, 20, 6.0, rng());
            const auto x = test::glide_tone(kRate, static_cast<std::size_t>(0.5 * kRate), g, parts);
            score(
                x, [&](double t) { return g.f0_hz(t); }, s);
        }
        print_row("glide 100-1200 c/s", static_cast<std::size_t>(cases / 2), s, NAN, "(info)", true);
    }

    // Speed: 44.1 kHz mono, default hop, 512-sample blocks, one core.
    {
        const double f0 = 196.0;
        const auto parts = test::falling_partials(f0, kRate, 20, 6.0, 5);
        auto x = test::harmonic_tone(kRate, static_cast<std::size_t>(10.0 * kRate), f0, parts);
        test::add_white_noise(x, test::harmonic_power(parts), 30.0, 6);
        pitch::YinTracker yin(pitch::YinConfig{});
        pitch::PitchFrame p;
        std::size_t frames = 0;
        const int reps = ctx.quick ? 1 : 5;
        const double t0 = bench::thread_cpu_s();
        for (int r = 0; r < reps; ++r)
            for (std::size_t i = 0; i < x.size(); i += 512) {
                yin.push(std::span<const float>(x).subspan(i, std::min<std::size_t>(512, x.size() - i)));
                while (yin.pull(p)) ++frames;
            }
        const double cpu = bench::thread_cpu_s() - t0;
        const double audio = reps * static_cast<double>(x.size()) / kRate;
        std::printf(
            "\nspeed: %.0f x real time (44.1 kHz mono, hop %zu samples = %.3f ms, %zu frames, %.2f us per frame; bar "
            ">= 1000 x (issue 12): %s)\n",
            audio / cpu, yin.hop_len_samples(), 1e3 * yin.hop_s(), frames, 1e6 * cpu / static_cast<double>(frames),
            audio / cpu >= 1000.0 ? "yes" : "NO");
        std::printf("delay_s %.4f, decimation %zu\n", yin.delay_s(), yin.decimation());
    }
}

}  // namespace

BEATLESS_BENCH_SECTION("yin", "YIN pitch tracker: accuracy per signal class (cents), CRB, speed", run);
