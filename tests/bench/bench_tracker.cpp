// beatless-bench section "tracker": the pitch tracker on performer-like
// signals, beside aubio's yin and yinfft run on the very same samples.
//
// Signals: tests/timbre_signals.h (sung tones with formants, jitter, shimmer
// and breath; sections; bowed strings; rooms; a telephone band; pink, brown
// and babble noise), each with exact instantaneous-f0 truth, 0.3 s of
// silence or noise alone before and after the note (false alarms). Scores
// follow the MIREX melody-extraction measures (raw pitch accuracy within 50
// cents, voicing recall and false alarm rate; J. Salamon et al., IEEE Signal
// Processing Magazine 31(2), 2014), with RPA counting a frame only when it is
// reported voiced and within the tolerance; RPA10 and RPA1 the same at 10
// and 1 cents. aubio (python3-aubio) runs through tests/bench/aubio_pitch.py
// with its defaults (buffer 2048, our hop); a frame is voiced when aubio
// reports a pitch above 0, and its time is the centre of the samples its
// estimate compares (as for ours): for yin the first half of the buffer and
// one period more, for yinfft the whole buffer.
#include "tests/bench/bench.h"

#include "audio/soundfile.h"
#include "pitch/dsp/steady_smooth.h"
#include "pitch/dsp/yin.h"
#include "pitch/dsp/yin_path.h"
#include "tests/signals.h"
#include "tests/timbre_signals.h"

#include <fcntl.h>
#include <spawn.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <functional>
#include <memory>
#include <random>
#include <string>
#include <vector>

using namespace beatless;

namespace {

constexpr double kRate = 44100.0;
constexpr double kTwoPi = 6.283185307179586;
constexpr double kLead = 0.3;  // s of silence or noise before and after the note
constexpr std::size_t kAubioBuf = 2048;

// Truth at t: f0 > 0 voiced, 0 unvoiced, < 0 not scored (near an edge or a change).
using Truth = std::function<double(double)>;

struct Case {
    std::vector<float> x;
    Truth truth;
    std::vector<double> changes_s;  // note changes (steps), for settling
    Truth exact;                    // unmasked truth, for settling
};

struct Frame {
    double t_s, f0_hz;
};

struct Score {
    std::size_t voiced = 0, unvoiced = 0, recalled = 0, false_alarms = 0;
    std::size_t within50 = 0, within10 = 0, within1 = 0, reported = 0, gross = 0, octave = 0, fifth = 0;
    std::vector<double> err;
    std::vector<double> settle5_ms, settle1_ms;
};

void score(const std::vector<Frame>& frames, const Case& c, Score& s) {
    for (const Frame& f : frames) {
        const double truth = c.truth(f.t_s);
        if (truth < 0.0) continue;
        const bool said = f.f0_hz > 0.0;
        if (truth == 0.0) {
            ++s.unvoiced;
            if (said) ++s.false_alarms;
            continue;
        }
        ++s.voiced;
        if (!said) continue;
        ++s.recalled;
        ++s.reported;
        const double e = test::cents(f.f0_hz, truth);
        const double a = std::fabs(e);
        s.err.push_back(a);
        if (a <= 50) ++s.within50;
        if (a <= 10) ++s.within10;
        if (a <= 1) ++s.within1;
        if (a > 50) {
            ++s.gross;
            for (double k : {-2400.0, -1200.0, 1200.0, 2400.0})
                if (std::fabs(e - k) <= 50) ++s.octave;
            for (double k : {-1902.0, -702.0, 702.0, 1902.0})
                if (std::fabs(e - k) <= 50) ++s.fifth;
        }
    }
    // Settling: from a change to the first frame after which every frame up
    // to 30 ms before the next change is voiced and within the tolerance.
    for (std::size_t i = 0; i < c.changes_s.size(); ++i) {
        const double tc = c.changes_s[i];
        const double tn = i + 1 < c.changes_s.size() ? c.changes_s[i + 1] : tc + 0.25;
        for (double tol : {5.0, 1.0}) {
            double settled = NAN;
            for (auto it = frames.rbegin(); it != frames.rend(); ++it) {
                if (it->t_s >= tn - 0.03) continue;
                if (it->t_s < tc) break;
                const double truth = c.exact(it->t_s);
                const bool ok = it->f0_hz > 0.0 && truth > 0.0 && std::fabs(test::cents(it->f0_hz, truth)) <= tol;
                if (!ok) break;
                settled = it->t_s;
            }
            (tol == 5.0 ? s.settle5_ms : s.settle1_ms)
                .push_back(std::isnan(settled) ? 1e3 * (tn - tc) : 1e3 * (settled - tc));
        }
    }
}

// The file path's settings, as `beatless track` uses them: floor kFileLowestHz, span 50 ms or what the floor needs.
pitch::YinConfig file_config() {
    pitch::YinConfig c;
    c.f_min_hz = pitch::kFileLowestHz;
    c.span_s = std::max(c.span_s, pitch::YinTracker::min_span_s(c));
    return c;
}

// ... with voicing and pitch chosen along a path over the whole signal (pitch/dsp/yin_path.h), as `beatless track`.
std::vector<pitch::PitchFrame> run_ours_full(const std::vector<float>& x) {
    pitch::YinConfig cfg = file_config();
    cfg.keep_candidates = true;
    pitch::YinTracker yin(cfg);
    pitch::VoicingPath path(yin.hop_s());
    std::vector<pitch::PitchFrame> out;
    pitch::PitchFrame p;
    for (std::size_t i = 0; i < x.size(); i += 512) {
        yin.push(std::span<const float>(x).subspan(i, std::min<std::size_t>(512, x.size() - i)));
        while (yin.pull(p)) path.push(p, yin.candidates());
    }
    path.finish();
    while (path.pull(p)) out.push_back(p);
    return out;
}

// A case frame by frame (BEATLESS_BENCH_TRACKER_FRAMES=<case>, with _TRACE): the truth, what the path reported,
// and the tracker's candidates (f0, d', probability; * multiple).
void print_frames(const Case& c, const std::vector<pitch::PitchFrame>& full) {
    pitch::YinConfig cfg = file_config();
    cfg.keep_candidates = true;
    pitch::YinTracker yin(cfg);
    std::vector<pitch::FrameCandidates> cands;
    pitch::PitchFrame p;
    for (std::size_t i = 0; i < c.x.size(); i += 512) {
        yin.push(std::span<const float>(c.x).subspan(i, std::min<std::size_t>(512, c.x.size() - i)));
        while (yin.pull(p)) cands.push_back(yin.candidates());
    }
    for (std::size_t k = 0; k < full.size(); ++k) {
        const double truth = c.truth(full[k].t_s);
        std::printf("%7.3f truth %7.2f  out %7.2f %4.2f  lvl %6.1f |", full[k].t_s, truth, full[k].f0_hz,
                    full[k].confidence, full[k].level_dbfs);
        if (k < cands.size())
            for (std::size_t j = 0; j < cands[k].n; ++j)
                std::printf(" %7.2f %4.2f %4.2f%s", cands[k].c[j].f0_hz, cands[k].c[j].aperiodicity,
                            cands[k].c[j].probability, cands[k].c[j].multiple ? "*" : " ");
        std::printf("\n");
    }
}

// Reported voiced frames on voiced truth, binned by confidence: count and count within 50 c.
void calibration(const std::vector<pitch::PitchFrame>& frames, const Case& c,
                 std::vector<std::pair<std::size_t, std::size_t>>& cal) {
    for (const auto& p : frames) {
        const double truth = c.truth(p.t_s);
        if (truth <= 0.0 || !p.voiced() || p.confidence < 0.5) continue;
        const auto b = std::min<std::size_t>(cal.size() - 1, static_cast<std::size_t>((p.confidence - 0.5) * 10.0));
        ++cal[b].first;
        if (std::fabs(test::cents(p.f0_hz, truth)) <= 50.0) ++cal[b].second;
    }
}

std::vector<Frame> frames_of(const std::vector<pitch::PitchFrame>& ps) {
    std::vector<Frame> out;
    for (const auto& p : ps) out.push_back({p.t_s, p.f0_hz});
    return out;
}

double log_uniform(std::mt19937_64& rng, double lo, double hi) {
    std::uniform_real_distribution<double> u(std::log(lo), std::log(hi));
    return std::exp(u(rng));
}
double uniform(std::mt19937_64& rng, double lo, double hi) {
    return std::uniform_real_distribution<double>(lo, hi)(rng);
}

std::size_t samples(double s) { return static_cast<std::size_t>(std::lround(s * kRate)); }

// Silence, the note (body_s), silence; truth voiced inside, unvoiced outside,
// not scored within `edge_s` of the note's ends.
Case framed(const std::vector<float>& note, double body_s, const test::F0Track& f0, double edge_s,
            double tail_dontcare_s = 0) {
    Case c;
    c.x.assign(samples(kLead), 0.0f);
    c.x.insert(c.x.end(), note.begin(), note.end());
    c.x.resize(c.x.size() + samples(kLead), 0.0f);
    c.truth = [=](double t) {
        const double a = kLead, b = kLead + body_s;
        if (std::fabs(t - a) < edge_s || (t > b - edge_s && t < b + edge_s + tail_dontcare_s)) return -1.0;
        return (t > a && t < b) ? f0(t - a) : 0.0;
    };
    return c;
}

test::F0Track vibrato_track(double centre, double depth_c, double rate_hz, double phase) {
    return [=](double t) { return centre * std::exp2(depth_c / 1200.0 * std::sin(kTwoPi * rate_hz * t + phase)); };
}

// The f0 a section is heard at: the geometric mean of its voices' f0.
test::F0Track geometric_mean(const std::vector<test::F0Track>& voices) {
    return [voices](double t) {
        double l = 0;
        for (const auto& v : voices) l += std::log2(v(t));
        return std::exp2(l / static_cast<double>(voices.size()));
    };
}

struct Bar {
    const char* text = "-";
    std::function<bool(const Score&)> met;
};

struct Class {
    std::string name;
    std::vector<Case> cases;
    Bar bar;
    bool settling = false;
};

double pct(std::size_t a, std::size_t b) { return b ? 100.0 * static_cast<double>(a) / static_cast<double>(b) : NAN; }
double frac(std::size_t a, std::size_t b) { return b ? static_cast<double>(a) / static_cast<double>(b) : NAN; }

void print_row(const std::string& name, const char* who, const Score& s, const Bar* bar) {
    const double med = bench::percentile(s.err, 50), p95 = bench::percentile(s.err, 95);
    std::printf("%-26s %-7s %6zu %6.3f %6.3f %6.3f %8.3f %8.2f %7.2f %6.2f %6.3f %6.2f", name.c_str(), who, s.voiced,
                frac(s.within50, s.voiced), frac(s.within10, s.voiced), frac(s.within1, s.voiced), med, p95,
                pct(s.gross, s.reported), pct(s.octave + s.fifth, s.reported), frac(s.recalled, s.voiced),
                pct(s.false_alarms, s.unvoiced));
    if (!s.settle5_ms.empty())
        std::printf("  settle 5c/1c %.1f/%.1f ms", bench::percentile(s.settle5_ms, 50),
                    bench::percentile(s.settle1_ms, 50));
    if (bar) std::printf("  bar %s: %s", bar->text, bar->met ? (bar->met(s) ? "met" : "NOT met") : "-");
    std::printf("\n");
}

// The measures on which ours is behind the better of the two aubio methods.
std::string behind(const Score& o, const Score& a, const Score& b) {
    struct M {
        const char* name;
        std::function<double(const Score&)> get;
        bool higher_better;
    };
    const M ms[] = {{"RPA50", [](const Score& s) { return frac(s.within50, s.voiced); }, true},
                    {"RPA10", [](const Score& s) { return frac(s.within10, s.voiced); }, true},
                    {"RPA1", [](const Score& s) { return frac(s.within1, s.voiced); }, true},
                    {"median", [](const Score& s) { return bench::percentile(s.err, 50); }, false},
                    {"gross", [](const Score& s) { return pct(s.gross, s.reported); }, false},
                    {"recall", [](const Score& s) { return frac(s.recalled, s.voiced); }, true},
                    {"FA", [](const Score& s) { return pct(s.false_alarms, s.unvoiced); }, false},
                    {"settle 5c", [](const Score& s) { return bench::percentile(s.settle5_ms, 50); }, false},
                    {"settle 1c", [](const Score& s) { return bench::percentile(s.settle1_ms, 50); }, false}};
    std::string out;
    for (const M& m : ms) {
        const double x = m.get(o), ya = m.get(a), yb = m.get(b);
        if (std::isnan(x)) continue;
        const double best = m.higher_better ? std::max(ya, yb) : std::min(ya, yb);
        const bool worse = m.higher_better ? x < best - 1e-9 : x > best + 1e-9;
        if (worse) out += (out.empty() ? "" : ", ") + std::string(m.name);
    }
    return out;
}

// [SECTION] Signal classes

// A choir of a second kind: eight singers on one note, each with their own vowel formants (scaled +-10 %: different
// vocal tracts), detuning (sigma 12 c), vibrato, jitter, shimmer and breath; the truth is the geometric mean f0.
void add_choir_class(std::vector<Class>& cls, int n, double body, double edge) {
    std::mt19937_64 rng(20261204);
    Class c{"choir of 8, own formants", {}, {"gross<=0.3% rec>=0.98", [](const Score& s) {
                                                 return pct(s.gross, s.reported) <= 0.3 &&
                                                        frac(s.recalled, s.voiced) >= 0.98;
                                             }}};
    const test::Voice vowels[] = {test::Voice{730, 1090, 2440}, test::Voice{270, 2290, 3010},
                                  test::Voice{300, 870, 2240},  test::Voice{850, 1220, 2810},
                                  test::Voice{590, 880, 2540},  test::Voice{530, 1840, 2480}};
    for (int i = 0; i < n; ++i) {
        const double centre = log_uniform(rng, 110, 700);
        std::vector<test::F0Track> voices;
        std::vector<float> mix(samples(body), 0.0f);
        const auto d = test::gaussian(8, rng());
        for (std::size_t k = 0; k < 8; ++k) {
            voices.push_back(vibrato_track(centre * std::exp2(12.0 * d[k] / 1200.0), uniform(rng, 10, 40),
                                           uniform(rng, 4.5, 6.5), uniform(rng, 0, kTwoPi)));
            test::Voice v = vowels[rng() % 6];
            const double tract = uniform(rng, 0.9, 1.1);
            v.f1_hz *= tract;
            v.f2_hz *= tract;
            v.f3_hz *= tract;
            v.jitter = 0.003;
            v.shimmer_db = 0.4;
            v.aspiration_db = -22;
            const auto s = test::sung_tone(kRate, mix.size(), voices.back(), v, rng());
            const auto gain = static_cast<float>(uniform(rng, 0.6, 1.0) / 8.0);
            for (std::size_t j = 0; j < mix.size(); ++j) mix[j] += gain * s[j];
        }
        c.cases.push_back(framed(mix, body, geometric_mean(voices), edge));
    }
    cls.push_back(std::move(c));
}

// Low strings against the Cramer-Rao bound: steady bowed-string spectra (a_l ~ |sin(pi l beta)| / l^2, Cremer 1984,
// from memory; the fundamental 10 dB weak) in white noise at 20 and 10 dB, 41-65 and 65-147 Hz. The bound is
// test::harmonic_crb_cents for the span the file path uses; its median over the cases is printed in the bar. On steady
// stretches the path then smooths across frames up to 50 ms each side (pitch/dsp/steady_smooth.h), so a smoothed
// frame draws on up to 150 ms of audio: the bound for that span is printed beside it (the estimator's true floor).
void add_low_string_classes(std::vector<Class>& cls, int n, double body) {
    std::mt19937_64 rng(20261205);
    const double span_samples = file_config().span_s * kRate;
    const struct {
        double lo, hi, snr_db;
        bool crb_bar, p95_bar;
    } sets[] = {{65, 147, 20, true, false}, {65, 147, 10, false, true}, {41.2, 65, 20, false, false}};
    for (const auto& set : sets) {
        std::vector<double> crb, crb_smoothed;
        Class c{"low strings " + std::to_string(static_cast<int>(set.lo)) + "-" +
                    std::to_string(static_cast<int>(set.hi)) + " Hz " + std::to_string(static_cast<int>(set.snr_db)) +
                    " dB",
                {},
                {}};
        for (int i = 0; i < n; ++i) {
            const double f0 = log_uniform(rng, set.lo, set.hi), beta = uniform(rng, 0.08, 0.15);
            std::vector<test::Partial> parts;
            for (int l = 1; l <= 40 && l * f0 < 0.45 * kRate; ++l) {
                const double a = std::fabs(std::sin(kTwoPi * 0.5 * l * beta)) / (l * l) * (l == 1 ? 0.316 : 1.0);
                parts.push_back({l, 0.05 * a / beta, uniform(rng, 0, kTwoPi)});
            }
            const auto note = test::harmonic_tone(kRate, samples(body), f0, parts);
            Case cs = framed(
                note, body, [f0](double) { return f0; }, 0.06);
            const double var = test::add_white_noise(cs.x, test::harmonic_power(parts), set.snr_db, rng());
            crb.push_back(test::harmonic_crb_cents(parts, f0, kRate, var, static_cast<std::size_t>(span_samples)));
            crb_smoothed.push_back(test::harmonic_crb_cents(
                parts, f0, kRate, var,
                static_cast<std::size_t>(span_samples + 2 * pitch::SteadySmoothConfig{}.max_half_s * kRate)));
            c.cases.push_back(std::move(cs));
        }
        const double bound = bench::percentile(crb, 50), bound_smoothed = bench::percentile(crb_smoothed, 50);
        static std::string texts[3];
        std::string& text = texts[&set - sets];
        if (set.crb_bar) {
            char b[160];
            std::snprintf(b, sizeof b, "med<=1.2 CRB (CRB %.3f c, 1.2 CRB %.3f c; over the %.0f ms smoothed: %.3f c)",
                          bound, 1.2 * bound, 1e3 * (span_samples / kRate + 2 * pitch::SteadySmoothConfig{}.max_half_s),
                          bound_smoothed);
            text = b;
            c.bar = {text.c_str(), [bound](const Score& s) { return bench::percentile(s.err, 50) <= 1.2 * bound; }};
        } else if (set.p95_bar) {
            c.bar = {"p95<=1c", [](const Score& s) { return bench::percentile(s.err, 95) <= 1.0; }};
        }
        cls.push_back(std::move(c));
    }
}

std::vector<Class> make_classes(bool quick) {
    std::mt19937_64 rng(20261203);
    const int n = quick ? 3 : 10;
    const double body = 0.8;
    const double edge = 0.04;
    std::vector<Class> cls;
    const test::Voice vowels[] = {test::Voice{730, 1090, 2440}, test::Voice{270, 2290, 3010},
                                  test::Voice{300, 870, 2240}, test::Voice{850, 1220, 2810},
                                  test::Voice{590, 880, 2540}};
    auto vowel = [&]() { return vowels[rng() % 5]; };
    auto sung_vibrato = [&](double lo, double hi, const test::Voice& v, test::F0Track& f0) {
        f0 = vibrato_track(log_uniform(rng, lo, hi), uniform(rng, 15, 100), uniform(rng, 4.5, 7.5),
                           uniform(rng, 0, kTwoPi));
        return test::sung_tone(kRate, samples(body), f0, v, rng());
    };

    // Clean sung vibrato.
    {
        Class c{"vibrato clean", {}, {"RPA1>=0.95 med<=0.3c", [](const Score& s) {
                                          return frac(s.within1, s.voiced) >= 0.95 &&
                                                 bench::percentile(s.err, 50) <= 0.3;
                                      }}};
        for (int i = 0; i < n; ++i) {
            test::F0Track f0;
            const auto x = sung_vibrato(100, 800, vowel(), f0);
            c.cases.push_back(framed(x, body, f0, edge));
        }
        cls.push_back(std::move(c));
    }
    // Breathy sung vibrato: jitter 0.2 %, shimmer 0.3 dB, aspiration -20 dB.
    {
        Class c{"vibrato breathy", {}, {}};
        for (int i = 0; i < n; ++i) {
            test::Voice v = vowel();
            v.jitter = 0.002;
            v.shimmer_db = 0.3;
            v.aspiration_db = -20;
            test::F0Track f0;
            const auto x = sung_vibrato(100, 800, v, f0);
            c.cases.push_back(framed(x, body, f0, edge));
        }
        cls.push_back(std::move(c));
    }
    auto gross_recall = [](const Score& s) {
        return pct(s.gross, s.reported) <= 0.3 && frac(s.recalled, s.voiced) >= 0.98;
    };
    // Section: four voices of one note, detuned (s.d. 8 c), each with its own slight vibrato; truth the mean in cents.
    {
        Class c{"section of 4 voices", {}, {"gross<=0.3% rec>=0.98", gross_recall}};
        for (int i = 0; i < n; ++i) {
            const double centre = log_uniform(rng, 110, 700);
            std::vector<test::F0Track> voices;
            std::vector<float> mix(samples(body), 0.0f);
            const auto d = test::gaussian(4, rng());
            for (int k = 0; k < 4; ++k) {
                voices.push_back(vibrato_track(centre * std::exp2(8.0 * d[static_cast<std::size_t>(k)] / 1200.0),
                                               uniform(rng, 5, 25), uniform(rng, 4.5, 6.5), uniform(rng, 0, kTwoPi)));
                test::Voice v = vowel();
                v.jitter = 0.002;
                v.shimmer_db = 0.3;
                v.aspiration_db = -25;
                const auto s = test::sung_tone(kRate, mix.size(), voices.back(), v, rng());
                for (std::size_t j = 0; j < mix.size(); ++j) mix[j] += 0.25f * s[j];
            }
            c.cases.push_back(framed(mix, body, geometric_mean(voices), edge));
        }
        cls.push_back(std::move(c));
    }
    // Bowed strings, fundamental 20 dB weak, 65-440 Hz, slight vibrato.
    {
        Class c{"bowed, weak fundamental", {}, {"gross<=0.3% rec>=0.98", gross_recall}};
        for (int i = 0; i < n; ++i) {
            const auto f0 = vibrato_track(log_uniform(rng, 65, 440), uniform(rng, 5, 20), uniform(rng, 5, 6.5),
                                          uniform(rng, 0, kTwoPi));
            const auto x = test::bowed_tone(kRate, samples(body), f0, uniform(rng, 0.08, 0.15), 0.1, rng());
            c.cases.push_back(framed(x, body, f0, edge));
        }
        cls.push_back(std::move(c));
    }
    auto room_bar = [](const Score& s) {
        return frac(s.within10, s.voiced) >= 0.98 && pct(s.gross, s.reported) <= 0.5;
    };
    // Rooms: three sung notes (0.4 s each, steps up to 7 semitones, vibrato +-30 c), RT60 0.3-1.5 s, direct-to-reverberant 0 dB.
    {
        Class c{"room RT60 0.3-1.5 s", {}, {"RPA10>=0.98 gross<=0.5%", room_bar}};
        for (int i = 0; i < n; ++i) {
            const double base = log_uniform(rng, 110, 500);
            const double steps[3] = {0.0, std::round(uniform(rng, -7, 7)), std::round(uniform(rng, -7, 7))};
            const double ph = uniform(rng, 0, kTwoPi), vr = uniform(rng, 4.5, 6.5);
            auto f0 = [=](double t) {
                const int k = std::clamp(static_cast<int>(t / 0.4), 0, 2);
                return base * std::exp2(steps[k] / 12.0 + 30.0 / 1200.0 * std::sin(kTwoPi * vr * t + ph));
            };
            const double len = 1.2;
            auto note = test::sung_tone(kRate, samples(len), f0, vowel(), rng());
            Case cs = framed(note, len, f0, edge);
            cs.x = test::in_room(cs.x, kRate, uniform(rng, 0.3, 1.5), 0.0, rng());
            const Truth inner = cs.truth;
            cs.truth = [=](double t) {  // not scored within 60 ms after a change, nor in the reverberant tail
                const double u = t - kLead;
                if (u > 1.2) return -1.0;
                for (double ch : {0.4, 0.8})
                    if (u > ch - 0.04 && u < ch + 0.06) return -1.0;
                return inner(t);
            };
            c.cases.push_back(std::move(cs));
        }
        cls.push_back(std::move(c));
    }
    // Telephone band 300-3400 Hz (4th order): sung vibrato 90-400 Hz, fundamental often removed.
    {
        Class c{"phone band 300-3400 Hz", {}, {"RPA10>=0.98 gross<=0.5%", room_bar}};
        for (int i = 0; i < n; ++i) {
            test::F0Track f0;
            test::Voice v = vowel();
            const auto x = sung_vibrato(90, 400, v, f0);
            Case cs = framed(x, body, f0, edge);
            cs.x = test::band_pass(cs.x, kRate, 300, 3400, 4);
            c.cases.push_back(std::move(cs));
        }
        cls.push_back(std::move(c));
    }
    // Noise: one long babble, cut at random places.
    const auto babble = test::coloured_noise(test::NoiseColour::babble, kRate, samples(8.0), rng());
    const struct {
        test::NoiseColour colour;
        const char* name;
    } colours[] = {
        {test::NoiseColour::pink, "pink"}, {test::NoiseColour::brown, "brown"}, {test::NoiseColour::babble, "babble"}};
    for (const auto& col : colours)
        for (double snr : {20.0, 10.0, 5.0}) {
            Class c{std::string(col.name) + " " + std::to_string(static_cast<int>(snr)) + " dB", {}, {}};
            if (snr == 10.0)
                c.bar = {"RPA10>=0.98 gross<=0.5% rec>=0.98 FA<=2%", [](const Score& s) {
                             return frac(s.within10, s.voiced) >= 0.98 && pct(s.gross, s.reported) <= 0.5 &&
                                    frac(s.recalled, s.voiced) >= 0.98 && pct(s.false_alarms, s.unvoiced) <= 2.0;
                         }};
            if (snr == 5.0)
                c.bar = {"RPA50>=0.9 rec>=0.9 FA<=2%", [](const Score& s) {
                             return frac(s.within50, s.voiced) >= 0.9 && frac(s.recalled, s.voiced) >= 0.9 &&
                                    pct(s.false_alarms, s.unvoiced) <= 2.0;
                         }};
            for (int i = 0; i < n; ++i) {
                test::F0Track f0;
                const auto x = sung_vibrato(90, 700, vowel(), f0);
                Case cs = framed(x, body, f0, edge);
                const double power = test::mean_square(x);
                std::vector<float> noise;
                if (col.colour == test::NoiseColour::babble) {
                    const auto off = static_cast<std::size_t>(rng() % (babble.size() - cs.x.size()));
                    noise.assign(babble.begin() + static_cast<std::ptrdiff_t>(off),
                                 babble.begin() + static_cast<std::ptrdiff_t>(off + cs.x.size()));
                } else {
                    noise = test::coloured_noise(col.colour, kRate, cs.x.size(), rng());
                }
                test::add_noise(cs.x, noise, power, snr);
                c.cases.push_back(std::move(cs));
            }
            cls.push_back(std::move(c));
        }
    // Low strings: double bass 41-65 Hz, fundamental 10 dB weak, slight vibrato.
    {
        Class c{"low strings 41-65 Hz", {}, {}};
        for (int i = 0; i < n; ++i) {
            const auto f0 =
                vibrato_track(log_uniform(rng, 41.2, 65), uniform(rng, 0, 10), 5.5, uniform(rng, 0, kTwoPi));
            const auto x = test::bowed_tone(kRate, samples(body), f0, uniform(rng, 0.08, 0.15), 0.3, rng());
            c.cases.push_back(framed(x, body, f0, 0.06));
        }
        cls.push_back(std::move(c));
    }
    // Note steps: sung straight tone, a new note every 0.3 s (1..7 semitones up or down), 100-440 Hz.
    {
        Class c{"note steps 100-440 Hz",
                {},
                {"settle 5c<=12ms 1c<=15ms",
                 [](const Score& s) {
                     return bench::percentile(s.settle5_ms, 50) <= 12.0 && bench::percentile(s.settle1_ms, 50) <= 15.0;
                 }},
                true};
        for (int i = 0; i < n; ++i) {
            std::vector<double> f(5);
            f[0] = log_uniform(rng, 130, 330);
            for (std::size_t k = 1; k < f.size(); ++k) {
                double s;
                do s = std::round(uniform(rng, -7, 7));
                while (s == 0 || f[k - 1] * std::exp2(s / 12) < 100 || f[k - 1] * std::exp2(s / 12) > 440);
                f[k] = f[k - 1] * std::exp2(s / 12.0);
            }
            const double len = 0.3 * static_cast<double>(f.size());
            auto f0 = [f](double t) {
                return f[std::min<std::size_t>(f.size() - 1, static_cast<std::size_t>(std::max(0.0, t) / 0.3))];
            };
            Case cs = framed(test::sung_tone(kRate, samples(len), f0, vowel(), rng()), len, f0, edge);
            const Truth inner = cs.truth;
            cs.exact = [=](double t) { return f0(t - kLead); };
            cs.truth = [=](double t) {  // within 50 ms after a change only the settling time is scored
                for (std::size_t k = 1; k < f.size(); ++k)
                    if (t - kLead > 0.3 * static_cast<double>(k) - 0.03 &&
                        t - kLead < 0.3 * static_cast<double>(k) + 0.05)
                        return -1.0;
                return inner(t);
            };
            for (std::size_t k = 1; k < f.size(); ++k) cs.changes_s.push_back(kLead + 0.3 * static_cast<double>(k));
            c.cases.push_back(std::move(cs));
        }
        cls.push_back(std::move(c));
    }
    add_choir_class(cls, n, body, edge);
    add_low_string_classes(cls, n, body);
    return cls;
}

// [SECTION] What bounds settling, and the command end to end

// After a change, the first frame on the new note may use only samples after it: the shortest stretch the
// refinement accepts (one period, half a period of window at least 96 samples, and the refiner's margins: see
// min_len in pitch/dsp/yin.cpp), so its t is half that stretch after the change; frames fall on a grid one hop
// apart, which adds up to a hop (half a hop on average). Printed at the median new note of the steps class.
void settling_bound(const std::vector<Class>& cls, std::size_t hop) {
    for (const Class& c : cls) {
        if (!c.settling) continue;
        std::vector<double> bound_ms;
        for (const Case& cs : c.cases)
            for (double tc : cs.changes_s) {
                const double T = kRate / cs.exact(tc + 0.1);
                const double stretch = T + std::max(0.5 * T, 96.0) + 16.0;
                bound_ms.push_back(1e3 * (0.5 * stretch + static_cast<double>(hop)) / kRate);
            }
        std::printf(
            "\nsettling bound (%s): the first frame on a new note can use only the samples after the change,\n"
            "at least 1.5 periods and the refiner's margins, so its t is half of that after the change, plus up to\n"
            "one hop for the frame grid: %.1f ms at the median (%.1f ms without the hop). aubio's yin: half its\n"
            "buffer's first half and a period, %.1f ms at 220 Hz.\n",
            c.name.c_str(), bench::percentile(bound_ms, 50),
            bench::percentile(bound_ms, 50) - 1e3 * static_cast<double>(hop) / kRate,
            1e3 * 0.5 * (0.5 * static_cast<double>(kAubioBuf) + kRate / 220.0) / kRate);
    }
}

// `beatless track` on a 3 s WAV file (a sung tone with vibrato), as a user runs it: CPU time of the child
// process (user + system, getrusage of the children), process start and file decoding included. The program is
// started directly (posix_spawn, its output to /dev/null), so no shell's start is counted with it.
void track_end_to_end(const bench::Context& ctx) {
    const auto dir = std::filesystem::temp_directory_path() / ("beatless-bench-track-" + std::to_string(getpid()));
    std::filesystem::create_directories(dir);
    const std::string wav = (dir / "take.wav").string();
    const auto f0 = vibrato_track(220.0, 40.0, 5.5, 0.0);
    audio::write_wav(wav, test::sung_tone(kRate, samples(3.0), f0, test::Voice{}, 7), kRate,
                     audio::SampleFormat::pcm24);
    const int runs = ctx.quick ? 3 : 10;
    const std::string cmd = std::string(BEATLESS_PROGRAM) + " track " + wav + " --format csv > /dev/null";
    const char* argv[] = {BEATLESS_PROGRAM, "track", wav.c_str(), "--format", "csv", nullptr};
    posix_spawn_file_actions_t to_null;
    posix_spawn_file_actions_init(&to_null);
    posix_spawn_file_actions_addopen(&to_null, 1, "/dev/null", O_WRONLY, 0);
    rusage before{}, after{};
    getrusage(RUSAGE_CHILDREN, &before);
    bool ok = true;
    for (int i = 0; i < runs && ok; ++i) {
        pid_t pid = 0;
        int status = 0;
        ok = posix_spawn(&pid, BEATLESS_PROGRAM, &to_null, nullptr, const_cast<char* const*>(argv), environ) == 0 &&
             waitpid(pid, &status, 0) == pid && WIFEXITED(status) && WEXITSTATUS(status) == 0;
    }
    getrusage(RUSAGE_CHILDREN, &after);
    posix_spawn_file_actions_destroy(&to_null);
    std::filesystem::remove_all(dir);
    auto secs = [](const timeval& t) { return static_cast<double>(t.tv_sec) + 1e-6 * static_cast<double>(t.tv_usec); };
    const double cpu = (secs(after.ru_utime) - secs(before.ru_utime) + secs(after.ru_stime) - secs(before.ru_stime)) /
                       static_cast<double>(runs);
    if (!ok) {
        std::printf("\nbeatless track: '%s' failed\n", cmd.c_str());
        return;
    }
    std::printf(
        "\nbeatless track on a 3 s WAV (44.1 kHz, 24-bit), process start included: %.1f ms CPU, %.0f x real time"
        " (bar >= 300 x: %s)\n",
        1e3 * cpu, 3.0 / cpu, 3.0 / cpu >= 300.0 ? "met" : "NOT met");
}

// [SECTION] aubio, on the same samples

// Writes every case to one raw file, runs the script, reads the frames back.
// Returns false (and says why) when python3-aubio is missing.
bool run_aubio(const std::vector<Class>& cls, std::size_t hop, std::vector<std::vector<std::vector<Frame>>> out[2]) {
    const auto dir = std::filesystem::temp_directory_path() / ("beatless-bench-" + std::to_string(getpid()));
    std::filesystem::create_directories(dir);
    const auto sig = dir / "signals.f32", idx = dir / "index.txt", prefix = dir / "aubio";
    {
        std::ofstream s(sig, std::ios::binary), i(idx);
        std::size_t off = 0;
        for (const auto& c : cls)
            for (const auto& cs : c.cases) {
                s.write(reinterpret_cast<const char*>(cs.x.data()),
                        static_cast<std::streamsize>(cs.x.size() * sizeof(float)));
                i << off << ' ' << cs.x.size() << '\n';
                off += cs.x.size();
            }
    }
    const std::string cmd = "/usr/bin/python3 " BEATLESS_SOURCE_DIR "/tests/bench/aubio_pitch.py " + sig.string() +
                            " " + idx.string() + " " + prefix.string() + " " + std::to_string(hop) + " " +
                            std::to_string(kAubioBuf) + " " + std::to_string(static_cast<int>(kRate));
    const int rc = std::system(cmd.c_str());
    bool ok = rc == 0;
    const char* names[2] = {"yin", "yinfft"};
    for (int m = 0; ok && m < 2; ++m) {
        std::ifstream in(prefix.string() + "." + names[m] + ".f32", std::ios::binary);
        out[m].clear();
        for (const auto& c : cls) {
            out[m].emplace_back();
            for (const auto& cs : c.cases) {
                std::vector<Frame> fr;
                for (std::size_t i = 0; i < cs.x.size() / hop; ++i) {
                    float v[2];
                    if (!in.read(reinterpret_cast<char*>(v), sizeof v)) ok = false;
                    // yin compares x[j] with x[j + T] for j in the first half of the buffer: the
                    // samples used are centred (buf / 2 + T) / 2 after its start; yinfft uses it all.
                    const double end = static_cast<double>((i + 1) * hop);
                    const double period = v[0] > 0.0f ? kRate / v[0] : 0.0;
                    const double t =
                        (m == 0 ? end - kAubioBuf + 0.5 * (0.5 * kAubioBuf + period) : end - 0.5 * kAubioBuf) / kRate;
                    fr.push_back({t, v[0] > 0.0f ? v[0] : 0.0});
                }
                out[m].back().push_back(std::move(fr));
            }
        }
    }
    std::filesystem::remove_all(dir);
    if (!ok) std::printf("(aubio columns missing: '%s' failed; install python3-aubio)\n", cmd.c_str());
    return ok;
}

void run(bench::Context& ctx) {
    std::printf(
        "signals: tests/timbre_signals.h, 0.3 s of silence (or the noise alone) around each note; default\n"
        "settings of the file path (floor 41 Hz, span 50 ms, voicing and pitch along a path: pitch/dsp/yin_path.h).\n"
        "Per class: voiced frames; RPA50/10/1 = share of voiced frames reported voiced\n"
        "and within 50/10/1 cents; median and p95 |cents| of reported frames; gross = share of reported frames\n"
        "over 50 c; oct/5th = share that are octave or fifth errors; recall and false alarms (FA) of the voicing.\n"
        "aubio: yin and yinfft, buffer %zu, same hop, defaults; voiced where it reports a pitch.\n\n",
        kAubioBuf);
    const double t0 = bench::thread_cpu_s();
    auto cls = make_classes(ctx.quick);
    // For work on one kind of signal: BEATLESS_BENCH_TRACKER_ONLY=<part of a class name> keeps the classes whose name
    // holds it (the signals are the same as in the full run: every class is generated first) and leaves out aubio.
    const char* only = std::getenv("BEATLESS_BENCH_TRACKER_ONLY");
    if (only)
        cls.erase(std::remove_if(cls.begin(), cls.end(),
                                 [&](const Class& c) { return c.name.find(only) == std::string::npos; }),
                  cls.end());
    std::size_t audio = 0;
    for (const auto& c : cls)
        for (const auto& cs : c.cases) audio += cs.x.size();
    std::printf("%zu classes, %.1f s of audio, generated in %.1f s CPU\n", cls.size(),
                static_cast<double>(audio) / kRate, bench::thread_cpu_s() - t0);
    const std::size_t hop = pitch::YinTracker(file_config()).hop_len_samples();
    std::vector<std::vector<std::vector<Frame>>> aubio[2];
    const bool have_aubio = !only && run_aubio(cls, hop, aubio);
    const bool trace = std::getenv("BEATLESS_BENCH_TRACKER_TRACE") != nullptr;  // a line per case

    std::vector<std::pair<std::size_t, std::size_t>> cal(5);  // confidence 0.5-0.6 .. 0.9-1.0: frames, within 50 c
    std::printf("\n%-26s %-7s %6s %6s %6s %6s %8s %8s %7s %6s %6s %6s\n", "class", "method", "voiced", "RPA50", "RPA10",
                "RPA1", "med_c", "p95_c", "gross%", "oct5%", "recall", "FA%");
    for (std::size_t k = 0; k < cls.size(); ++k) {
        const Class& c = cls[k];
        Score ours, yin, yinfft;
        for (std::size_t i = 0; i < c.cases.size(); ++i) {
            const auto full = run_ours_full(c.cases[i].x);
            score(frames_of(full), c.cases[i], ours);
            if (trace && std::getenv("BEATLESS_BENCH_TRACKER_FRAMES") &&
                std::atoi(std::getenv("BEATLESS_BENCH_TRACKER_FRAMES")) == static_cast<int>(i))
                print_frames(c.cases[i], full);
            if (trace) {
                Score one;
                score(frames_of(full), c.cases[i], one);
                char name[48];
                std::snprintf(name, sizeof name, "  case %zu", i);
                print_row(name, "ours", one, nullptr);
            }
            calibration(full, c.cases[i], cal);
            if (have_aubio) {
                score(aubio[0][k][i], c.cases[i], yin);
                score(aubio[1][k][i], c.cases[i], yinfft);
            }
        }
        print_row(c.name, "ours", ours, c.bar.met ? &c.bar : nullptr);
        if (have_aubio) {
            print_row("", "yin", yin, nullptr);
            print_row("", "yinfft", yinfft, nullptr);
            const std::string b = behind(ours, yin, yinfft);
            std::printf("%-26s ours %s\n", "",
                        b.empty() ? "ahead of or level with both aubio methods on every measure"
                                  : ("behind the better aubio method on: " + b).c_str());
        }
    }
    std::printf(
        "\nconfidence calibration (ours, every class): share of voiced-truth frames reported at a confidence\n"
        "in the bin that are within 50 c\n%-12s %8s %10s\n",
        "confidence", "frames", "within50");
    for (std::size_t b = 0; b < cal.size(); ++b)
        std::printf("%4.1f - %4.1f %8zu %10.3f\n", 0.5 + 0.1 * static_cast<double>(b),
                    0.6 + 0.1 * static_cast<double>(b), cal[b].first, frac(cal[b].second, cal[b].first));
    settling_bound(cls, hop);
    track_end_to_end(ctx);
}

}  // namespace

BEATLESS_BENCH_SECTION("tracker",
                       "pitch tracker on performer-like signals (voices, sections, strings, rooms, noise) beside aubio",
                       run);
// The command end to end alone (also the last line of `tracker`), for a quick look at the start cost.
BEATLESS_BENCH_SECTION("track", "beatless track on a 3 s WAV end to end, process start included (the tracker's line)",
                       track_end_to_end);
