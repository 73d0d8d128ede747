// `beatless listen`, `beatless devices` and `beatless --demo` as a user runs
// them. The recordings are made by `beatless tone` (a drone and a second
// voice at an exact ratio and detuning), so the truth is known: cents are
// 1200 log2 (Ellis 1885); the beat of the coinciding partials of p/q is
// |q f_voice - p f_root| (Helmholtz 1863, ch. VIII), computed here.
#include "audio/soundfile.h"
#include "tests/cli.h"
#include "tests/mix_signals.h"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <sstream>
#include <string>
#include <vector>

using beatless::test::run_program;
using beatless::test::TempDir;

namespace {

double num_after(const std::string& line, const std::string& key) {
    const auto k = line.find("\"" + key + "\": ");
    if (k == std::string::npos) return NAN;
    const std::string rest = line.substr(k + key.size() + 4);
    if (rest.rfind("null", 0) == 0) return NAN;
    return std::stod(rest);
}

std::vector<std::string> lines_of(const std::string& s) {
    std::vector<std::string> out;
    std::istringstream in(s);
    for (std::string l; std::getline(in, l);) out.push_back(l);
    return out;
}

// JSON lines with t inside [from, to].
std::vector<std::string> between(const std::vector<std::string>& lines, double from, double to) {
    std::vector<std::string> out;
    for (const auto& l : lines) {
        const double t = num_after(l, "t");
        if (t >= from && t <= to) out.push_back(l);
    }
    return out;
}

}  // namespace

TEST_CASE("listen --input-file --fast: a recorded drone at the root is removed and the voice is read") {
    TempDir dir;
    const std::string wav = dir.file("take.wav");
    // Drone A2 (110 Hz), voice at 7/5 + 3 cents, the drone 6 dB louder.
    const auto tone = run_program({"tone", "--root", "A2", "--ratio", "7/5", "--detune-cents", "3", "--seconds", "3",
                                   "--timbre", "bright", "--level-db", "-14", "--voice-db", "-20", "--out", wav});
    REQUIRE(tone.exit_code == 0);
    const auto r = run_program({"listen", "--input-file", wav, "--fast", "--root", "A2", "--target", "7/5", "--drone"});
    REQUIRE_MESSAGE(r.exit_code == 0, r.err);
    const auto all = lines_of(r.out);
    REQUIRE(all.size() > 500);
    const auto steady = between(all, 0.5, 2.5);
    REQUIRE(steady.size() > 350);
    const double f_root = 110.0, f_voice = 110.0 * 1.4 * std::exp2(3.0 / 1200.0);
    int good = 0;
    for (const auto& l : steady) {
        CAPTURE(l);
        CHECK(l.find("\"target\": \"7/5\"") != std::string::npos);
        CHECK(l.find("\"beat_partials\": [7, 5]") != std::string::npos);
        // Within what a 1 cent error of the voice allows: 5 f_voice (2^(1/1200) - 1).
        CHECK(std::fabs(num_after(l, "beat_hz") - std::fabs(5 * f_voice - 7 * f_root)) <=
              5 * f_voice * (std::exp2(1 / 1200.0) - 1));
        if (std::fabs(num_after(l, "dev_cents") - 3.0) <= 1.0) ++good;
    }
    CHECK(good == static_cast<int>(steady.size()));
    CHECK(r.err.find("analyzing") != std::string::npos);
    CHECK(r.err.find("ring overflows 0") != std::string::npos);

    // The same file without removal: the plain tracker is pulled by the drone.
    const auto plain = run_program({"listen", "--input-file", wav, "--fast", "--root", "A2", "--target", "7/5"});
    REQUIRE(plain.exit_code == 0);
    int plain_good = 0;
    const auto plain_steady = between(lines_of(plain.out), 0.5, 2.5);
    for (const auto& l : plain_steady)
        if (std::fabs(num_after(l, "dev_cents") - 3.0) <= 1.0) ++plain_good;
    CHECK(plain_good < static_cast<int>(plain_steady.size()) / 2);
}

TEST_CASE("listen JSON lines: every key present, null where unvoiced, --seconds honoured") {
    TempDir dir;
    const std::string wav = dir.file("short.wav");
    // 0.3 s of silence, then a 220 Hz harmonic tone.
    std::vector<float> x(48000, 0.0f);
    beatless::testsig::add_tone(x, 48000.0, 220.0, 0.3, 1.0, 0.2, beatless::testsig::rolloff(10));
    beatless::audio::write_wav(wav, x, 48000.0);
    const auto r = run_program(
        {"listen", "--input-file", wav, "--fast", "--root", "A3", "--targets", "5-limit", "--seconds", "0.8"});
    REQUIRE(r.exit_code == 0);
    const auto all = lines_of(r.out);
    REQUIRE(all.size() > 100);
    bool saw_null = false, saw_voiced = false;
    for (const auto& l : all) {
        for (const char* k : {"t", "f0_hz", "confidence", "ratio", "target", "target_name", "dev_cents",
                              "centre_dev_cents", "beat_hz", "beat_partials"})
            CHECK(l.find(std::string("\"") + k + "\": ") != std::string::npos);
        CHECK(num_after(l, "t") <= 0.8);
        if (l.find("\"f0_hz\": null") != std::string::npos) {
            saw_null = true;
            CHECK(l.find("\"dev_cents\": null") != std::string::npos);
            CHECK(l.find("\"beat_partials\": null") != std::string::npos);
        } else {
            saw_voiced = true;
        }
    }
    CHECK(saw_voiced);
    CHECK(saw_null);  // the silence
    // 220 Hz against A3 = 220 Hz (ISO 16): the unison, 0 cents.
    for (const auto& l : between(all, 0.4, 0.7)) {
        CHECK(l.find("\"target\": \"1/1\"") != std::string::npos);
        CHECK(std::fabs(num_after(l, "dev_cents")) < 0.5);
    }
}

TEST_CASE("listen --demo runs the performer through the engine in real time") {
    const auto r = run_program({"listen", "--demo", "--seconds", "1.5", "--targets", "tritones"},
                               {"BEATLESS_HOME=/nonexistent-beatless"});
    REQUIRE_MESSAGE(r.exit_code == 0, r.err);
    const auto all = lines_of(r.out);
    // One reading per 5 ms hop.
    CHECK(all.size() >= 250);
    CHECK(all.size() <= 320);
    int voiced = 0;
    for (const auto& l : all)
        if (l.find("\"f0_hz\": null") == std::string::npos) ++voiced;
    CHECK(voiced > 100);
    CHECK(r.err.find("listening to the demo performer") != std::string::npos);
}

// `beatless --demo` now opens the Practice screen (tests/test_snapshot.cpp);
// the drone caution of `listen` still appears on first use only.
TEST_CASE("listen --demo --drone: the drone caution appears on first use only") {
    TempDir home;
    const auto r = run_program({"listen", "--demo", "--drone", "--seconds", "0.5"}, {"BEATLESS_HOME=" + home.path()});
    REQUIRE_MESSAGE(r.exit_code == 0, r.err);
    CHECK(r.err.find("caution") != std::string::npos);
    const auto again =
        run_program({"listen", "--demo", "--drone", "--seconds", "0.5"}, {"BEATLESS_HOME=" + home.path()});
    CHECK(again.err.find("caution") == std::string::npos);
}

TEST_CASE("listen: bad choices give one line and the right exit code") {
    struct Case {
        std::vector<std::string> args;
        int code;
        std::string says;
    } cases[] = {
        {{"listen", "--demo", "--input-file", "x.wav"}, 2, "choose one input"},
        {{"listen", "--input-file", "/nonexistent/take.wav", "--fast"}, 1, "/nonexistent/take.wav"},
        {{"listen", "--demo", "--fast"}, 2, "--fast works with --input-file only"},
        {{"listen", "--demo", "--root", "H9"}, 1, "'H9'"},
        {{"listen", "--demo", "--a4", "500"}, 1, "500"},
        {{"listen", "--demo", "--lowest", "20"}, 1, "--lowest 20 = 20 Hz: out of range (30 to 200 Hz)"},
        {{"listen", "--demo", "--lowest", "C0"}, 1, "--lowest C0 = 16.4 Hz: out of range (30 to 200 Hz)"},
        {{"listen", "--demo", "--lowest", "low"}, 1, "'low'"},
        {{"listen", "--demo", "--targets", "no-such-set"}, 1, "no-such-set"},
        {{"listen", "--demo", "--drone", "--level-db", "0"}, 1, "-6 dBFS"},
        {{"listen", "--input", "no-such-device-anywhere"}, 1, "device"},
    };
    for (const auto& c : cases) {
        CAPTURE(c.args.back());
        const auto r = run_program(c.args, {"JACK_NO_START_SERVER=1"});
        CHECK(r.exit_code == c.code);
        CHECK(r.out.empty());
        CHECK(beatless::test::line_count(r.err) == 1);
        CHECK(r.err.find(c.says) != std::string::npos);
    }
}

TEST_CASE("devices prints a table or JSON, and says plainly when there is none") {
    const auto r = run_program({"devices", "--format", "json"}, {"JACK_NO_START_SERVER=1"});
    REQUIRE(r.exit_code == 0);
    CHECK(r.out.rfind("{\"devices\": [", 0) == 0);
    if (r.out.find("\"index\"") == std::string::npos) {
        CHECK(r.err == "beatless: no audio devices found (use --demo for the built-in performer)\n");
    } else {
        CHECK(r.out.find("\"host_api\"") != std::string::npos);
    }
}

TEST_CASE("ratio, analyze --format json and listen agree on the beat of 45/32 three cents sharp over D3") {
    // One take, three commands, one audible pair. The truth: D3 = 146.832 Hz
    // (ISO 16, 12-TET), voice 45/32 x 2^(3/1200); 45/32's own pair (45:32,
    // 6.6 kHz) lies above the 4 kHz limit, so all three must name the same
    // simpler pair and a rate |q f_voice - p f_root| (Helmholtz 1863, ch. VIII).
    // Tolerance 0.3 Hz: half a cent at the ~1 kHz where the pair meets.
    TempDir dir;
    const std::string wav = dir.file("take.wav");
    const auto tone = run_program(
        {"tone", "--root", "D3", "--ratio", "45/32", "--detune-cents", "3", "--seconds", "4", "--out", wav});
    REQUIRE_MESSAGE(tone.exit_code == 0, tone.err);
    const double f_root = 440.0 * std::exp2(-19.0 / 12.0);
    const double f_voice = f_root * 45.0 / 32.0 * std::exp2(3.0 / 1200.0);

    const auto ratio = run_program({"ratio", "45/32", "--root", "D3", "--format", "json"});
    REQUIRE(ratio.exit_code == 0);
    const int p = std::stoi(beatless::test::json_value(ratio.out, "d['intervals'][0]['audible_partials']['root']"));
    const int q = std::stoi(beatless::test::json_value(ratio.out, "d['intervals'][0]['audible_partials']['upper']"));
    CHECK(p * f_root <= 4000.0);
    const double truth = std::fabs(q * f_voice - p * f_root);
    // ratio tabulates +2 and +5 cents; the rate is linear in the voice's Hz,
    // and so within 0.01 Hz linear in cents over 3 cents: interpolate +3.
    const double at2 = std::stod(beatless::test::json_value(
        ratio.out, "[b['beat_hz'] for b in d['intervals'][0]['beats'] if b['dev_cents'] == 2][0]"));
    const double at5 = std::stod(beatless::test::json_value(
        ratio.out, "[b['beat_hz'] for b in d['intervals'][0]['beats'] if b['dev_cents'] == 5][0]"));
    const double ratio_hz = at2 + (at5 - at2) / 3.0;
    CHECK(std::fabs(ratio_hz - truth) <= 0.01);

    const auto an = run_program({"analyze", wav, "--root", "D3", "--targets", "tritones", "--format", "json"});
    REQUIRE_MESSAGE(an.exit_code == 0, an.err);
    REQUIRE(beatless::test::json_value(an.out, "len(d['notes'])") == "1");
    CHECK(beatless::test::json_value(an.out, "d['notes'][0]['target']") == "45/32");
    CHECK(std::stoi(beatless::test::json_value(an.out, "d['notes'][0]['partial_root']")) == p);
    CHECK(std::stoi(beatless::test::json_value(an.out, "d['notes'][0]['partial_voice']")) == q);
    const double analyze_hz = std::stod(beatless::test::json_value(an.out, "d['notes'][0]['beat_hz']"));
    CHECK(std::fabs(analyze_hz - truth) <= 0.3);

    const auto li =
        run_program({"listen", "--input-file", wav, "--fast", "--root", "D3", "--target", "45/32", "--drone"});
    REQUIRE_MESSAGE(li.exit_code == 0, li.err);
    const auto steady = between(lines_of(li.out), 1.0, 3.0);
    REQUIRE(steady.size() > 300);
    std::vector<double> rates;
    for (const auto& l : steady) {
        CHECK(l.find("\"beat_partials\": [" + std::to_string(p) + ", " + std::to_string(q) + "]") != std::string::npos);
        CHECK(l.find("\"own_partials\": [45, 32]") != std::string::npos);
        rates.push_back(num_after(l, "beat_hz"));
    }
    std::nth_element(rates.begin(), rates.begin() + static_cast<std::ptrdiff_t>(rates.size() / 2), rates.end());
    const double listen_hz = rates[rates.size() / 2];
    MESSAGE("45/32 +3 c over D3, pair " << p << ":" << q << ": truth " << truth << " Hz, ratio " << ratio_hz
                                        << ", analyze " << analyze_hz << ", listen median " << listen_hz);
    CHECK(std::fabs(listen_hz - truth) <= 0.3);
    CHECK(std::fabs(listen_hz - analyze_hz) <= 0.3);
}

// Two voices in one input (issue "double stops live"): a double stop that
// steps between three intervals, each held 2 s and slightly mistuned, then a
// unison. The truth: the interval in cents (1200 log2, Ellis 1885) and the
// beat of the coinciding partials of p/q, |q f_high - p f_low| (Helmholtz
// 1863, ch. VIII). Bowed-string-like spectra (12 partials, 1/h roll-off).
TEST_CASE("listen --voices 2: each step of a double stop read with its target, deviation and beat") {
    TempDir dir;
    const double fs = 48000.0, low_hz = 196.0;  // G3, a violin's open G
    struct Step {
        int p, q;
        double dev_cents;
        const char* target;
    };
    const Step steps[] = {{7, 4, +3.0, "7/4"}, {7, 5, -4.0, "7/5"}, {3, 2, +2.0, "3/2"}};
    std::vector<float> x(static_cast<std::size_t>(10.0 * fs), 0.0f);
    for (int i = 0; i < 3; ++i) {
        const double high_hz = low_hz * steps[i].p / steps[i].q * std::exp2(steps[i].dev_cents / 1200.0);
        beatless::testsig::add_tone(x, fs, low_hz, 2.0 * i, 2.0 * i + 2.0, 0.2, beatless::testsig::rolloff(12));
        beatless::testsig::add_tone(x, fs, high_hz, 2.0 * i, 2.0 * i + 2.0, 0.16, beatless::testsig::rolloff(12));
    }
    // A unison, 1 cent apart: the two cannot be told apart.
    beatless::testsig::add_tone(x, fs, low_hz, 6.0, 8.0, 0.2, beatless::testsig::rolloff(12));
    beatless::testsig::add_tone(x, fs, low_hz * std::exp2(1.0 / 1200.0), 6.0, 8.0, 0.16,
                                beatless::testsig::rolloff(12));
    // An octave, bowed-string-like partials 1/h^2 at equal levels: the upper voice hides in the even partials.
    beatless::testsig::add_tone(x, fs, low_hz, 8.0, 10.0, 0.2, beatless::testsig::rolloff(12, 2.0));
    beatless::testsig::add_tone(x, fs, 2.0 * low_hz, 8.0, 10.0, 0.2, beatless::testsig::rolloff(12, 2.0));
    beatless::testsig::add_noise(x, 1e-3, 5);
    const std::string wav = dir.file("double_stop.wav");
    beatless::audio::write_wav(wav, x, fs);

    const auto r = run_program({"listen", "--voices", "2", "--input-file", wav, "--fast", "--root", "G3", "--targets",
                                "7-limit", "--in-tune", "1"});
    REQUIRE_MESSAGE(r.exit_code == 0, r.err);
    const auto all = lines_of(r.out);
    REQUIRE(all.size() > 600);  // a reading every 10 ms
    for (int i = 0; i < 3; ++i) {
        // The steady middle of each step (the 170 ms window has left the change).
        const auto mid = between(all, 2.0 * i + 0.4, 2.0 * i + 1.6);
        REQUIRE(mid.size() > 100);
        const double high_hz = low_hz * steps[i].p / steps[i].q * std::exp2(steps[i].dev_cents / 1200.0);
        const double beat_true = std::fabs(steps[i].q * high_hz - steps[i].p * low_hz);
        int right = 0, dev_ok = 0, beat_ok = 0, measured = 0, moves = 0;
        for (const auto& l : mid) {
            // No drone: the lower voice leads, the upper moves against the deviation (common practice).
            moves += l.find("\"told_apart\": true") != std::string::npos &&
                     l.find("\"reference\": \"lower voice\"") != std::string::npos &&
                     l.find("\"voice\": \"high\"") != std::string::npos &&
                     std::fabs(num_after(l, "cents") + steps[i].dev_cents) <= 0.5;
            right += l.find(std::string("\"target\": \"") + steps[i].target + "\"") != std::string::npos;
            dev_ok += std::fabs(num_after(l, "dev_cents") - steps[i].dev_cents) <= 0.5;
            const double mb = num_after(l, "measured_beat_hz");
            if (std::isfinite(mb)) {
                ++measured;
                beat_ok += std::fabs(mb - beat_true) <= 0.2;
            }
        }
        CAPTURE(steps[i].target);
        CAPTURE(mid.front());
        CHECK(right == static_cast<int>(mid.size()));
        CHECK(dev_ok == static_cast<int>(mid.size()));
        CHECK(moves == static_cast<int>(mid.size()));
        CHECK(std::fabs(num_after(mid[mid.size() / 2], "beat_hz") - beat_true) <
              0.05);  // predicted from the measured f0s
        // Measuring needs whole beats in the signal: a beat slower than about
        // 1.5 Hz may not complete enough of them in a 2 s step (null then).
        if (beat_true > 1.5) CHECK(measured > static_cast<int>(mid.size()) / 4);
        CHECK(beat_ok == measured);
        // The bar of issue 16: a new interval read within 5 c in 60 ms. `t` is the centre of the second stage's
        // 20 ms window, so a reading at t ends 10 ms later: from 50 ms after the change on, the new step.
        if (i == 0) continue;
        const auto early = between(all, 2.0 * i + 0.05, 2.0 * i + 0.4);
        REQUIRE(early.size() > 25);
        int early_right = 0;
        for (const auto& l : early)
            early_right += l.find(std::string("\"target\": \"") + steps[i].target + "\"") != std::string::npos &&
                           std::fabs(num_after(l, "dev_cents") - steps[i].dev_cents) <= 5.0;
        CAPTURE(early.front());
        CHECK(early_right == static_cast<int>(early.size()));
    }
    // The unison: no interval is printed for it (one voice heard, or nothing claimed as a dyad off the unison).
    const auto uni = between(all, 6.4, 7.6);
    REQUIRE(uni.size() > 100);
    int claimed = 0, said = 0;
    for (const auto& l : uni) {
        claimed += std::isfinite(num_after(l, "dev_cents")) && std::fabs(num_after(l, "interval_cents")) > 5.0;
        said += l.find("\"told_apart\": false") != std::string::npos &&
                (l.find("\"blend\": \"one_series\"") != std::string::npos ||
                 l.find("\"blend\": \"near_unison\"") != std::string::npos);
    }
    CHECK(claimed == 0);
    CHECK(said >= static_cast<int>(uni.size()) * 9 / 10);
    // The octave: said as an octave (one series), or read as the 2/1 it is; never another interval.
    const auto oct = between(all, 8.4, 9.6);
    REQUIRE(oct.size() > 100);
    int octave = 0, wrong = 0;
    for (const auto& l : oct) {
        const double c = num_after(l, "interval_cents");
        octave += l.find("\"blend\": \"octave\"") != std::string::npos || std::fabs(c - 1200.0) <= 5.0;
        wrong += std::isfinite(c) && std::fabs(c - 1200.0) > 5.0;
    }
    CHECK(octave >= static_cast<int>(oct.size()) * 9 / 10);
    CHECK(wrong == 0);
}
