// beatless-bench section "analyze": the whole `beatless analyze` path on
// sound files, as the command runs it (ui/session/take_analysis.h).
//
// One voice: a drone and a voice holding five tritones off by random
// amounts, with vibrato and noise, written as 24-bit WAV files; the timed
// part is analyze_one_voice (both passes: file decoding, root detection,
// drone comb, YIN, note segmentation). Two voices: held double stops at and
// off just ratios; analyze_two_voices (decoding, two-voice tracker, dyad
// segmentation). Speed is thread CPU time, printed as x real time and as
// minutes of audio per second. Memory: resident size sampled during the
// analysis of a short and a long file (the same take repeated).
#include "audio/soundfile.h"
#include "tests/bench/bench.h"
#include "tests/mix_signals.h"
#include "ui/session/take_analysis.h"

#include <sys/resource.h>
#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <random>
#include <string>
#include <vector>

using namespace beatless;
using namespace beatless::testsig;
using beatless::bench::Context;
using beatless::bench::percentile;
using beatless::bench::thread_cpu_s;

namespace {
constexpr double kFs = 44100.0;

// A temporary directory for the generated files, removed at the end.
struct ScratchDir {
    std::string path;
    ScratchDir() {
        std::string tmpl = (std::filesystem::temp_directory_path() / "beatless-bench-XXXXXX").string();
        if (mkdtemp(tmpl.data())) path = tmpl;
    }
    ~ScratchDir() {
        std::error_code ec;
        if (!path.empty()) std::filesystem::remove_all(path, ec);
    }
    std::string file(const std::string& name) const { return path + "/" + name; }
};

const char* verdict(bool ok) { return ok ? "PASS" : "FAIL"; }

void print_speed(double audio_s, double cpu_s, double bar) {
    const double xrt = audio_s / cpu_s;
    std::printf(
        "  speed               %.0f x real time = %.1f minutes of audio per second (%.2f s CPU for %.0f s)   bar >= "
        "%.0f x: %s\n",
        xrt, xrt / 60.0, cpu_s, audio_s, bar, verdict(xrt >= bar));
}

// Resident set size in kB (Linux /proc/self/status, VmRSS).
long rss_kb() {
    std::ifstream f("/proc/self/status");
    for (std::string line; std::getline(f, line);)
        if (line.rfind("VmRSS:", 0) == 0) return std::stol(line.substr(6));
    return -1;
}

void one_voice(Context& ctx, const ScratchDir& dir) {
    const int takes = ctx.quick ? 3 : 20;
    std::mt19937_64 rng(17);
    std::uniform_real_distribution<double> u(0.0, 1.0);
    // The five targets the voice holds: within the whole tritone family some
    // lie two cents apart, and a deviation of 8 cents would name a neighbour.
    const pitch::TargetSet set = target_set({"7/5", "10/7", "11/8", "45/32", "16/11"}, "five tritones");
    const char* names[] = {"7/5", "10/7", "11/8", "45/32", "16/11"};
    std::vector<double> dev_err, root_err;
    int missed = 0, misnamed = 0;
    double cpu = 0.0, audio_s = 0.0;
    for (int c = 0; c < takes; ++c) {
        const double root = 87.31 * std::exp2(1.5 * u(rng));  // F2 .. about C4
        auto truth = tritone_notes();
        // Within +-3.5 c: 7/5 and 45/32 lie 7.7 c apart, so a larger
        // deviation would rightly name the neighbour.
        for (auto& [r, d] : truth) d = -3.5 + 7.0 * u(rng);
        const Take take = drone_and_voice(kFs, root, truth, 300 + static_cast<std::uint64_t>(c), root < 150.0 ? 1 : 0);
        const std::string path = dir.file("take" + std::to_string(c) + ".wav");
        audio::write_wav(path, take.samples, kFs, audio::SampleFormat::pcm24);
        ui::AnalysisRequest req;
        req.path = path;
        req.targets = set;
        const double t0 = thread_cpu_s();
        const ui::OneVoiceAnalysis a = ui::analyze_one_voice(req);
        cpu += thread_cpu_s() - t0;
        audio_s += take.dur_s;
        root_err.push_back(std::fabs(1200.0 * std::log2(a.root_hz / root)));
        if (a.notes.size() != truth.size()) {
            ++missed;
            continue;
        }
        for (std::size_t i = 0; i < truth.size(); ++i) {
            dev_err.push_back(std::fabs(a.notes[i].dev_cents - truth[i].second));
            if (set.targets[static_cast<std::size_t>(a.notes[i].target_index)].interval.str() != names[i]) ++misnamed;
        }
    }
    const double mx = dev_err.empty() ? NAN : *std::max_element(dev_err.begin(), dev_err.end());
    const double rmx = *std::max_element(root_err.begin(), root_err.end());
    std::printf(
        "one voice: %d takes (%.0f s, 24-bit WAV), drone 87-247 Hz, five tritones off by -3.5..+3.5 c, vibrato, noise "
        "at -60 dBFS\n",
        takes, audio_s);
    std::printf(
        "  deviation error     median %.3f c   p95 %.3f c   max %.3f c   takes with notes missed: %d   misnamed: %d   "
        "bar max < 1 c: %s\n",
        percentile(dev_err, 50), percentile(dev_err, 95), mx, missed, misnamed,
        verdict(mx < 1.0 && missed == 0 && misnamed == 0));
    std::printf("  root error          median %.4f c   max %.4f c   bar max <= 0.2 c: %s\n", percentile(root_err, 50),
                rmx, verdict(rmx <= 0.2));
    print_speed(audio_s, cpu, 200.0);
}

void two_voices(Context& ctx, const ScratchDir& dir) {
    const int files = ctx.quick ? 2 : 10;
    const pitch::TargetSet set = target_set({"6/5", "5/4", "4/3", "7/5", "3/2", "8/5", "5/3", "7/4"});
    std::mt19937_64 rng(23);
    std::uniform_real_distribution<double> u(0.0, 1.0);
    const double offs[] = {0.0, 3.0, -3.0, 7.0, -7.0, 12.0, -12.0};
    std::vector<double> dev_err;
    int beat_ok = 0, beat_total = 0, missed = 0;
    std::string misses;  // predicted/measured Hz of the beats outside the bar
    double cpu = 0.0, audio_s = 0.0;
    const double hold = 3.2, rest = 0.3;
    for (int c = 0; c < files; ++c) {
        std::vector<HeldDyad> truth;
        std::vector<std::size_t> target;
        for (int k = 0; k < 7; ++k) {
            const std::size_t ti =
                static_cast<std::size_t>(u(rng) * static_cast<double>(set.targets.size())) % set.targets.size();
            const pitch::Ratio r = set.targets[ti].interval.ratio();
            const double f_low = 120.0 * std::exp2(1.5 * u(rng));
            const double lo = 0.2 * std::pow(10.0, -12.0 * u(rng) / 20.0),
                         hi = 0.2 * std::pow(10.0, -12.0 * u(rng) / 20.0);
            truth.push_back({static_cast<int>(r.num), static_cast<int>(r.den), offs[k], lo, hi, f_low});
            target.push_back(ti);
        }
        const auto x = held_dyads(kFs, truth, hold, rest, 1e-3, 900 + static_cast<std::uint64_t>(c));
        const std::string path = dir.file("duo" + std::to_string(c) + ".wav");
        audio::write_wav(path, x, kFs, audio::SampleFormat::pcm24);
        ui::AnalysisRequest req;
        req.path = path;
        req.targets = set;
        const double t0 = thread_cpu_s();
        const ui::TwoVoiceAnalysis a = ui::analyze_two_voices(req);
        cpu += thread_cpu_s() - t0;
        audio_s += static_cast<double>(x.size()) / kFs;
        if (a.dyads.size() != truth.size()) {
            ++missed;
            continue;
        }
        for (std::size_t k = 0; k < truth.size(); ++k) {
            const pitch::DyadResult& d = a.dyads[k];
            if (d.target_index != static_cast<int>(target[k])) {
                dev_err.push_back(INFINITY);
                continue;
            }
            dev_err.push_back(std::fabs(d.dev_cents - truth[k].off_cents));
            ++beat_total;
            if (std::fabs(d.measured_beat_hz - d.predicted_beat_hz) <= std::max(0.1 * d.predicted_beat_hz, 0.2))
                ++beat_ok;
            else
                misses += " " + std::to_string(d.predicted_beat_hz).substr(0, 5) + "/" +
                          (std::isfinite(d.measured_beat_hz) ? std::to_string(d.measured_beat_hz).substr(0, 5)
                                                             : std::string("none"));
        }
    }
    const double mx = dev_err.empty() ? NAN : *std::max_element(dev_err.begin(), dev_err.end());
    std::printf(
        "two voices: %d files of 7 double stops held %.1f s (%.0f s), 8 just targets, offsets 0/+-3/+-7/+-12 c, f_low "
        "120-340 Hz, 0..-12 dB each\n",
        files, hold, audio_s);
    std::printf(
        "  interval error      median %.3f c   p95 %.3f c   max %.3f c   files with dyads missed: %d   bar max < 1 c: "
        "%s\n",
        percentile(dev_err, 50), percentile(dev_err, 95), mx, missed, verdict(mx < 1.0 && missed == 0));
    std::printf("  measured beat within 10 %% or 0.2 Hz of the predicted: %d of %d dyads%s%s\n", beat_ok, beat_total,
                misses.empty() ? "" : "; the others (predicted/measured Hz):", misses.c_str());
    print_speed(audio_s, cpu, 50.0);
}

// A 16-bit WAV of `minutes`: the take repeated.
void write_repeated(const std::string& path, const Take& take, double minutes) {
    audio::SoundWriter w(path, kFs, 1, audio::SampleFormat::pcm16);
    const double take_s = static_cast<double>(take.samples.size()) / kFs;
    for (double t = 0.0; t < minutes * 60.0; t += take_s) w.write(take.samples);
    w.close();
}

// Peak resident size while analyzing a file of `minutes` (one take repeated).
long peak_rss_kb(const ScratchDir& dir, const Take& take, double minutes, std::size_t* notes) {
    const std::string path = dir.file("long.wav");
    write_repeated(path, take, minutes);
    ui::AnalysisRequest req;
    req.path = path;
    req.targets = tritone_set();
    req.keep_trace = true;  // as for --report
    long peak = rss_kb();
    const ui::OneVoiceAnalysis a =
        ui::analyze_one_voice(req, [&](double, const char*) { peak = std::max(peak, rss_kb()); });
    *notes = a.notes.size();
    std::remove(path.c_str());
    return peak;
}

void memory(Context& ctx, const ScratchDir& dir) {
    const Take take = drone_and_voice(kFs, 110.0, tritone_notes(), 41);
    const double short_min = 1.0, long_min = ctx.quick ? 5.0 : 30.0;
    std::size_t n_short = 0, n_long = 0;
    const long before = rss_kb();
    const long a = peak_rss_kb(dir, take, short_min, &n_short);
    const long b = peak_rss_kb(dir, take, long_min, &n_long);
    std::printf(
        "memory: resident size during the analysis (one voice, with the report's trace), the same take repeated\n");
    std::printf("  %4.0f min: peak %ld kB (%zu notes)   %4.0f min: peak %ld kB (%zu notes)   before: %ld kB\n",
                short_min, a, n_short, long_min, b, n_long, before);
    const double per_min = static_cast<double>(b - a) / (long_min - short_min);
    std::printf("  growth %.1f kB per minute of audio (the note list: about %.0f bytes a note)   bar < 50 kB/min: %s\n",
                per_min, static_cast<double>(sizeof(pitch::NoteResult) + sizeof(std::int64_t)),
                verdict(per_min < 50.0));
}

// A ten-minute take analysed as `analyze` does (the same take repeated, 16-bit WAV): thread CPU time and the peak
// resident size, sampled during the analysis and as the kernel's high-water mark (getrusage).
void ten_minutes(Context& ctx, const ScratchDir& dir) {
    const double minutes = ctx.quick ? 2.0 : 10.0;
    const Take take = drone_and_voice(kFs, 110.0, tritone_notes(), 53);
    const std::string path = dir.file("ten.wav");
    write_repeated(path, take, minutes);
    ui::AnalysisRequest req;
    req.path = path;
    req.targets = tritone_set();
    long peak = rss_kb();
    const double t0 = thread_cpu_s();
    const ui::OneVoiceAnalysis a =
        ui::analyze_one_voice(req, [&](double, const char*) { peak = std::max(peak, rss_kb()); });
    const double cpu = thread_cpu_s() - t0;
    rusage ru{};
    getrusage(RUSAGE_SELF, &ru);
    std::printf("a %.0f-minute take, as analyze runs it (%zu notes)\n", minutes, a.notes.size());
    std::printf("  CPU %.2f s (scaled to 10 minutes: %.2f s)   bar < 2 s: %s\n", cpu, cpu * 10.0 / minutes,
                verdict(cpu * 10.0 / minutes < 2.0));
    std::printf("  peak resident %.1f MB during the analysis; process max RSS %.1f MB   bar < 200 MB: %s\n",
                static_cast<double>(peak) / 1024.0, static_cast<double>(ru.ru_maxrss) / 1024.0,
                verdict(static_cast<double>(ru.ru_maxrss) / 1024.0 < 200.0));
    std::remove(path.c_str());
}

void run(Context& ctx) {
    const ScratchDir dir;
    ten_minutes(ctx, dir);
    one_voice(ctx, dir);
    two_voices(ctx, dir);
    memory(ctx, dir);
}
}  // namespace

BEATLESS_BENCH_SECTION("analyze",
                       "beatless analyze on WAV files: one voice (root pass + comb + YIN + notes), two voices, memory",
                       run);
