// `beatless analyze` end to end: recordings with exactly known content are
// written as WAV files here, the real program analyzes them (root pass,
// drone comb, YIN tracker, note or dyad segmentation), and its JSON is read
// back with Python's json module (tests/cli.h json_value, an outside parser).
//
// Sources: the bars are the review issue's: every note found, each
// deviation within 1 cent of the truth, the right target named, the root
// within 0.2 cent; for two voices the interval deviation within 1 cent and
// the measured beat within 10 % (or 0.2 Hz) of the predicted one. Beat of
// the coinciding pair of p/q mistuned by d cents: p * f_low * |2^(d/1200) - 1|
// (Helmholtz, On the Sensations of Tone, ch. VIII; pitch/theory/beats.h
// beat_rate_at). Cents by Ellis (1885). PNG layout: the IHDR chunk follows
// the 8-byte signature, width and height big-endian at bytes 16-23 (PNG
// specification, W3C / ISO/IEC 15948, section 11.2.2).
#include "audio/soundfile.h"
#include "pitch/theory/beats.h"
#include "tests/cli.h"
#include "tests/mix_signals.h"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

using beatless::test::json_value;
using beatless::test::run_program;
using beatless::test::TempDir;
using namespace beatless::testsig;

namespace {
constexpr double kFs = 44100.0;

void write(const std::string& path, const std::vector<float>& x, double fs = kFs) {
    beatless::audio::write_wav(path, x, fs, beatless::audio::SampleFormat::float32);
}

// Numbers printed by a Python expression that joins them with spaces.
constexpr auto numbers = &beatless::test::json_numbers;
constexpr auto words = &beatless::test::json_words;

double cents(double a, double b) { return 1200.0 * std::log2(a / b); }
}  // namespace

TEST_CASE(
    "a drone and a voice holding five mistuned tritones: every note, within 1 cent, the right target, the root within "
    "0.2 cent") {
    TempDir dir;
    const char* names[] = {"7/5", "10/7", "11/8", "45/32", "16/11"};
    const auto truth = tritone_notes();
    struct Case {
        double root;
        std::uint64_t seed;
        int octaves;
        double fs;
    };
    // 110 Hz at 48 kHz sits on a half bin of the root detector's frame (its odd harmonics between two bins).
    for (const Case c : {Case{110.0, 1, 1, kFs}, Case{146.8324, 2, 1, kFs}, Case{87.31, 3, 1, kFs},
                         Case{220.0, 4, 0, kFs}, Case{110.0, 5, 1, 48000.0}}) {
        CAPTURE(c.root);
        CAPTURE(c.seed);
        CAPTURE(c.fs);
        const Take take = drone_and_voice(c.fs, c.root, truth, c.seed, c.octaves);
        const std::string wav = dir.file("take.wav");
        write(wav, take.samples, c.fs);
        const auto r = run_program({"analyze", wav, "--targets", "tritones", "--format", "json"});
        REQUIRE(r.exit_code == 0);
        CHECK(r.err.empty());  // no progress bar when stderr is not a terminal
        CHECK(json_value(r.out, "d['root_source']") == "detected");
        CHECK(std::fabs(cents(std::stod(json_value(r.out, "d['root_hz']")), c.root)) < 0.2);
        CHECK(std::stod(json_value(r.out, "d['root_confidence']")) >= 0.5);
        CHECK(json_value(r.out, "d['targets']") == "tritones");
        const auto dev = numbers(r.out, "[n['dev_cents'] for n in d['notes']]");
        const auto target = words(r.out, "[n['target'] for n in d['notes']]");
        const auto start = numbers(r.out, "[n['start_s'] for n in d['notes']]");
        const auto end = numbers(r.out, "[n['end_s'] for n in d['notes']]");
        const auto f0 = numbers(r.out, "[n['f0_hz'] for n in d['notes']]");
        const auto beat = numbers(r.out, "[n['beat_hz'] for n in d['notes']]");
        const auto pr = numbers(r.out, "[n['partial_root'] for n in d['notes']]");
        const auto pv = numbers(r.out, "[n['partial_voice'] for n in d['notes']]");
        REQUIRE(dev.size() == truth.size());
        REQUIRE(pr.size() == truth.size());
        REQUIRE(pv.size() == truth.size());
        REQUIRE(target.size() == truth.size());
        for (std::size_t i = 0; i < truth.size(); ++i) {
            CAPTURE(i);
            CHECK(target[i] == names[i]);
            CHECK(std::fabs(dev[i] - truth[i].second) < 1.0);
            CHECK(std::fabs(start[i] - take.notes[i].start_s) < 0.03);
            CHECK(std::fabs(end[i] - take.notes[i].end_s) < 0.03);
            CHECK(std::fabs(cents(f0[i], take.notes[i].centre_hz)) < 1.0);
            // The audible pair beats at |q f_voice - p f_root| for the true
            // voice (Helmholtz, Sensations of Tone, ch. VIII). The voice sings
            // the target c.octaves above: ratio p/q times 2^octaves. Its own
            // pair is the audible one when a 12-partial drone sounds it below
            // 4 kHz; otherwise a pair within those limits.
            const beatless::pitch::Ratio ratio = beatless::pitch::parse_interval(names[i]).ratio();
            const auto shifted = beatless::pitch::Ratio::make(ratio.num << c.octaves, ratio.den);
            if (shifted.num <= 12 && shifted.den <= 16 && static_cast<double>(shifted.num) * c.root <= 4000.0) {
                CHECK(pr[i] == shifted.num);
                CHECK(pv[i] == shifted.den);
            } else {
                CHECK(pr[i] <= 12);
                CHECK(pv[i] <= 16);
                CHECK(pr[i] * c.root <= 4000.0);
            }
            const double expect = std::fabs(pv[i] * take.notes[i].centre_hz - pr[i] * c.root);
            CHECK(std::fabs(beat[i] - expect) <= std::max(0.15 * expect, 0.2));
        }
        // One summary row per target, in the set's order, with one note each.
        CHECK(json_value(r.out, "len(d['summary'])") == "5");
        CHECK(json_value(r.out, "sum(s['count'] for s in d['summary'])") == "5");
    }
}

TEST_CASE("text, CSV, a target file and a given root") {
    TempDir dir;
    // The five targets the voice holds (10/7 six cents flat would be nearer 729/512 in the whole tritone set).
    const std::string set = dir.file("five.toml");
    {
        std::ofstream f(set);
        f << "kind = \"targets\"\ntitle = \"Five tritones\"\n";
        for (const char* iv : {"7/5", "10/7", "11/8", "45/32", "16/11"})
            f << "[[target]]\ninterval = \"" << iv << "\"\n";
    }
    const Take take = drone_and_voice(kFs, 110.0, {{10.0 / 7.0, -6.0}, {10.0 / 7.0, -5.0}, {7.0 / 5.0, 3.0}}, 9);
    const std::string wav = dir.file("take.wav");
    write(wav, take.samples);
    const auto text = run_program({"analyze", wav, "--targets", set});
    REQUIRE(text.exit_code == 0);
    CHECK(text.out.find("root 110.000 Hz (A2 +0.0 c), found in the file") != std::string::npos);
    // The voice sings an octave above the drone (drone_and_voice, voice_octaves 1): named so, as its notes are.
    CHECK(text.out.find("10/7 +1oct averages 5.5 cents flat (2 notes, spread 0.") != std::string::npos);
    CHECK(text.out.find("greater septimal tritone") != std::string::npos);

    const auto csv = run_program({"analyze", wav, "--targets", set, "--format", "csv"});
    REQUIRE(csv.exit_code == 0);
    CHECK(csv.out.rfind("start_s,end_s,f0_hz,ratio,target,target_name,dev_cents,spread_cents,settle_s,beat_hz,partial_"
                        "root,partial_voice,beat_in_tune_hz,remark\n",
                        0) == 0);
    CHECK(beatless::test::line_count(csv.out) == 4);
    CHECK(csv.out.find(",10/7,greater septimal tritone,-") != std::string::npos);

    // A2 at A4 = 440 Hz is 110 Hz (ISO 16; MIDI 45). The root is used as given.
    const auto given = run_program({"analyze", wav, "--targets", set, "--root", "A2", "--format", "json"});
    REQUIRE(given.exit_code == 0);
    CHECK(json_value(given.out, "d['root_source']") == "given");
    CHECK(json_value(given.out, "d['root_confidence']") == "None");
    CHECK(json_value(given.out, "d['root_hz']") == "110");
    CHECK(std::fabs(cents(std::stod(json_value(given.out, "d['drone_hz']")), 110.0)) < 0.2);
    const auto dev = numbers(given.out, "[n['dev_cents'] for n in d['notes']]");
    REQUIRE(dev.size() == 3);
    CHECK(std::fabs(dev[0] + 6.0) < 1.0);
    // A root given 3 cents high moves every deviation 3 cents flat; the comb still follows the drone.
    const auto high = run_program({"analyze", wav, "--targets", set, "--root",
                                   std::to_string(110.0 * std::exp2(3.0 / 1200.0)), "--format", "json"});
    REQUIRE(high.exit_code == 0);
    const auto dev_high = numbers(high.out, "[n['dev_cents'] for n in d['notes']]");
    REQUIRE(dev_high.size() == 3);
    for (std::size_t i = 0; i < 3; ++i) CHECK(std::fabs(dev_high[i] - (dev[i] - 3.0)) < 0.1);
}

TEST_CASE("two voices from one microphone: held intervals at and off just ratios, equal and unequal loudness") {
    TempDir dir;
    std::vector<HeldDyad> truth = {{3, 2, 3, 0.2, 0.2, 196},  {5, 4, -3, 0.2, 0.08, 220}, {7, 4, 7, 0.08, 0.2, 150},
                                   {6, 5, -7, 0.2, 0.2, 247}, {4, 3, 12, 0.2, 0.06, 180}, {7, 5, -12, 0.15, 0.15, 200},
                                   {5, 3, 0, 0.2, 0.2, 165}};
    // Held 3.2 s: long enough for a beat of one per second to show whole cycles.
    const auto x = held_dyads(kFs, truth, 3.2, 0.3, 1e-3, 11);
    const std::string wav = dir.file("duo.wav");
    write(wav, x);
    const auto r = run_program({"analyze", wav, "--voices", "2", "--format", "json"});
    REQUIRE(r.exit_code == 0);
    CHECK(r.err.empty());
    CHECK(json_value(r.out, "d['voices']") == "2");
    const auto target = words(r.out, "[n['target'] for n in d['intervals']]");
    const auto dev = numbers(r.out, "[n['dev_cents'] for n in d['intervals']]");
    const auto f_low = numbers(r.out, "[n['f_low_hz'] for n in d['intervals']]");
    const auto f_high = numbers(r.out, "[n['f_high_hz'] for n in d['intervals']]");
    const auto predicted = numbers(r.out, "[n['predicted_beat_hz'] for n in d['intervals']]");
    const auto measured = numbers(r.out, "[n['measured_beat_hz'] for n in d['intervals']]");
    REQUIRE(target.size() == 7);
    for (std::size_t i = 0; i < 7; ++i) {
        const HeldDyad& d = truth[i];
        CAPTURE(i);
        const beatless::pitch::Ratio ratio{d.p, d.q};
        CHECK(target[i] == ratio.str());
        CHECK(std::fabs(dev[i] - d.off_cents) < 1.0);
        CHECK(std::fabs(cents(f_low[i], d.f_low_hz)) < 1.0);
        CHECK(std::fabs(cents(f_high[i], d.f_high_hz())) < 1.0);
        const double beat = beatless::pitch::beat_rate_at(d.f_low_hz, ratio, d.off_cents);
        CHECK(std::fabs(predicted[i] - beat) <= std::max(0.02 * beat, 0.02));
        MESSAGE(ratio.str() << " " << d.off_cents << " c: predicted " << predicted[i] << " Hz, measured " << measured[i]
                            << " Hz");
        CHECK(std::fabs(measured[i] - predicted[i]) <= std::max(0.1 * predicted[i], 0.2));
    }
    // The summary speaks of intervals, wide and narrow.
    const auto text = run_program({"analyze", wav, "--voices", "2"});
    REQUIRE(text.exit_code == 0);
    CHECK(text.out.find("4/3 averages 12 cents wide (1 interval)") != std::string::npos);
    const auto csv = run_program({"analyze", wav, "--voices", "2", "--format", "csv"});
    CHECK(csv.out.rfind("start_s,end_s,f_low_hz,f_high_hz,interval_cents,target,target_name,dev_cents,spread_cents,"
                        "predicted_beat_hz,measured_beat_hz,remark\n",
                        0) == 0);
    CHECK(beatless::test::line_count(csv.out) == 8);
}

TEST_CASE("no drone, silence, noise only, a clipped take: clear messages or empty results") {
    TempDir dir;
    // A voice singing the five tritones with no drone under it.
    const Take alone = drone_and_voice(kFs, 110.0, tritone_notes(), 3, 1, 1.6, 1e-3, 0.0);
    write(dir.file("alone.wav"), alone.samples);
    const auto a = run_program({"analyze", dir.file("alone.wav")});
    CHECK(a.exit_code == 1);
    CHECK(a.out.empty());
    CHECK(a.err.rfind("beatless: " + dir.file("alone.wav") + ": no steady drone or pedal tone found (best candidate ",
                      0) == 0);
    CHECK(a.err.find("; give --root NOTE|HZ\n") != std::string::npos);
    CHECK(beatless::test::line_count(a.err) == 1);
    // Given a root, the same voice is measured.
    const auto a2 =
        run_program({"analyze", dir.file("alone.wav"), "--root", "110", "--targets", "tritones", "--format", "json"});
    CHECK(a2.exit_code == 0);
    CHECK(json_value(a2.out, "len(d['notes'])") == "5");
    // One steady note alone, no vibrato, no drone: the drone detector takes it for a drone; with the root given it is
    // still the voice, measured against that root (154 Hz over 110 Hz is exactly 7/5: 0 c).
    std::vector<float> one(static_cast<std::size_t>(3 * kFs));
    for (std::size_t i = 0; i < one.size(); ++i)
        for (int k = 1; k <= 5; ++k)
            one[i] += static_cast<float>(0.2 * std::pow(0.6, k - 1) *
                                         std::sin(2.0 * M_PI * 154.0 * k * static_cast<double>(i) / kFs));
    write(dir.file("one.wav"), one);
    const auto o =
        run_program({"analyze", dir.file("one.wav"), "--root", "110", "--targets", "tritones", "--format", "json"});
    CHECK(o.exit_code == 0);
    REQUIRE(json_value(o.out, "len(d['notes'])") == "1");
    CHECK(std::fabs(std::stod(json_value(o.out, "d['notes'][0]['dev_cents']"))) < 0.5);

    write(dir.file("silence.wav"), std::vector<float>(static_cast<std::size_t>(3 * kFs), 0.0f));
    for (const std::vector<std::string>& extra : {std::vector<std::string>{}, {"--root", "A2"}, {"--voices", "2"}}) {
        std::vector<std::string> args{"analyze", dir.file("silence.wav")};
        args.insert(args.end(), extra.begin(), extra.end());
        const auto s = run_program(args);
        CHECK(s.exit_code == 1);
        CHECK(s.err ==
              "beatless: " + dir.file("silence.wav") + ": silent (no sound above -60 dBFS); nothing to analyze\n");
    }

    std::vector<float> noise(static_cast<std::size_t>(4 * kFs), 0.0f);
    add_noise(noise, 0.05, 21);
    write(dir.file("noise.wav"), noise);
    const auto n1 = run_program({"analyze", dir.file("noise.wav")});
    CHECK(n1.exit_code == 1);
    CHECK(n1.err.find("no steady drone or pedal tone found") != std::string::npos);
    const auto n2 = run_program({"analyze", dir.file("noise.wav"), "--root", "A2", "--format", "json"});
    CHECK(n2.exit_code == 0);
    CHECK(json_value(n2.out, "len(d['notes'])") == "0");
    CHECK(json_value(n2.out, "len(d['summary'])") == "0");
    const auto n3 = run_program({"analyze", dir.file("noise.wav"), "--root", "A2"});
    CHECK(n3.out.find("no held notes found") != std::string::npos);
    const auto n4 = run_program({"analyze", dir.file("noise.wav"), "--voices", "2", "--format", "json"});
    CHECK(n4.exit_code == 0);
    CHECK(json_value(n4.out, "len(d['intervals'])") == "0");

    // Clipped at full scale: a warning, every note flagged, and still measured.
    Take loud = drone_and_voice(kFs, 110.0, tritone_notes(), 5);
    for (float& v : loud.samples) v *= 2.0f;
    clip(loud.samples, 1.0f);
    write(dir.file("loud.wav"), loud.samples);
    const auto c = run_program({"analyze", dir.file("loud.wav"), "--targets", "tritones", "--format", "json"});
    CHECK(c.exit_code == 0);
    CHECK(c.err.rfind("beatless: warning: " + dir.file("loud.wav") + ": ", 0) == 0);
    CHECK(c.err.find("samples at full scale (clipped)") != std::string::npos);
    CHECK(std::stod(json_value(c.out, "d['clipped_samples']")) > 1000);
    CHECK(json_value(c.out, "len(d['notes'])") == "5");
    CHECK(json_value(c.out, "all(n['clipped'] for n in d['notes'])") == "True");
}

TEST_CASE(
    "a double bass over E1: every note is found within 1 cent with the default floor (41 Hz) and with --lowest 38; "
    "--lowest 55 misses two") {
    // 9/8 and 5/4 over E1 (41.20 Hz, 12-TET from A4 = 440 Hz, ISO 16) are
    // 46.4 and 51.5 Hz, below 55 Hz; 4/3 is 54.9 Hz, at the edge.
    TempDir dir;
    const double root = 41.2034;
    const std::string wav = dir.file("bass.wav");
    write(wav, low_drone_and_voice(kFs, root));
    const auto r = run_program({"analyze", wav, "--targets", "5-limit", "--lowest", "38", "--format", "json"});
    REQUIRE_MESSAGE(r.exit_code == 0, r.err);
    CHECK(std::fabs(cents(std::stod(json_value(r.out, "d['root_hz']")), root)) < 0.2);
    const auto dev = numbers(r.out, "[n['dev_cents'] for n in d['notes']]");
    const auto target = words(r.out, "[n['target'] for n in d['notes']]");
    REQUIRE(dev.size() == low_take_steps().size());
    const char* want[] = {"9/8", "5/4", "4/3"};
    for (std::size_t i = 0; i < dev.size(); ++i) {
        CHECK(target[i] == want[i]);
        CHECK(std::fabs(dev[i] - low_take_steps()[i].second) < 1.0);
    }
    const auto plain = run_program({"analyze", wav, "--targets", "5-limit", "--format", "json"});
    REQUIRE(plain.exit_code == 0);
    const auto plain_dev = numbers(plain.out, "[n['dev_cents'] for n in d['notes']]");
    REQUIRE(plain_dev.size() == low_take_steps().size());
    for (std::size_t i = 0; i < plain_dev.size(); ++i)
        CHECK(std::fabs(plain_dev[i] - low_take_steps()[i].second) < 1.0);
    const auto high = run_program({"analyze", wav, "--targets", "5-limit", "--lowest", "55", "--format", "json"});
    REQUIRE(high.exit_code == 0);
    const auto high_target = words(high.out, "[n['target'] for n in d['notes']]");
    CHECK(std::count(high_target.begin(), high_target.end(), "9/8") == 0);  // 46.4 Hz: below the floor
    CHECK(std::count(high_target.begin(), high_target.end(), "5/4") == 0);  // 51.5 Hz: below the floor
    // Two voices are followed from 60 Hz: --lowest is refused there.
    const auto two = run_program({"analyze", wav, "--voices", "2", "--lowest", "38"});
    CHECK(two.exit_code == 2);
    CHECK(two.err == "beatless: --lowest works with one voice; two voices are followed from 60 Hz\n");
}

TEST_CASE("the report: a 2000 x 1200 PNG") {
    TempDir dir;
    const Take take = drone_and_voice(kFs, 110.0, tritone_notes(), 1);
    write(dir.file("take.wav"), take.samples);
    const auto r =
        run_program({"analyze", dir.file("take.wav"), "--targets", "tritones", "--report", dir.file("take.png")});
    REQUIRE(r.exit_code == 0);
    std::ifstream png(dir.file("take.png"), std::ios::binary);
    REQUIRE(png.good());
    unsigned char head[24] = {};
    png.read(reinterpret_cast<char*>(head), sizeof head);
    CHECK(head[0] == 0x89);
    CHECK(std::string(reinterpret_cast<char*>(head) + 1, 3) == "PNG");
    CHECK(std::string(reinterpret_cast<char*>(head) + 12, 4) == "IHDR");
    const auto be32 = [&](int at) {
        return (head[at] << 24) | (head[at + 1] << 16) | (head[at + 2] << 8) | head[at + 3];
    };
    CHECK(be32(16) == 2000);
    CHECK(be32(20) == 1200);
    // A directory that does not exist is refused before the analysis.
    const auto bad = run_program({"analyze", dir.file("take.wav"), "--report", dir.file("no/such/dir/take.png")});
    CHECK(bad.exit_code == 1);
    CHECK(bad.err == "beatless: " + dir.file("no/such/dir/take.png") + ": cannot be written (no directory " +
                         dir.file("no/such/dir") + ")\n");
    CHECK(bad.out.empty());
}

TEST_CASE("bad input and bad usage") {
    TempDir dir;
    std::vector<float> x(static_cast<std::size_t>(kFs), 0.0f);
    add_tone(x, kFs, 110.0, 0.0, 1.0, 0.2, rolloff(6));
    write(dir.file("short.wav"), x);
    const std::string wav = dir.file("short.wav");
    struct Case {
        std::vector<std::string> args;
        int code;
        std::string err;
    };
    const Case cases[] = {
        {{"analyze", dir.file("missing.wav")}, 1, "beatless: " + dir.file("missing.wav") + ": no such file\n"},
        {{"analyze", wav, "--voices", "3"}, 2, "beatless: --voices 3: choose 1 or 2\n"},
        {{"analyze", wav, "--voices", "2", "--root", "A2"},
         2,
         "beatless: --root: with --voices 2 the interval is measured between the two voices; leave --root out\n"},
        {{"analyze", wav, "--root", "5"}, 1, "beatless: '5' = 5 Hz: out of range for a root (20 to 2000 Hz)\n"},
        {{"analyze", wav, "--root", "H9"},
         1,
         "beatless: 'H9': not a note name (expected a form such as C4, F#3 or Bb2)\n"},
        {{"analyze", wav, "--a4", "300"}, 1, "beatless: A4 reference 300 Hz: out of range (400 to 480 Hz)\n"},
        {{"analyze", wav, "--targets", "tritonez"}, 1, ""},
        {{"analyze", wav, "--channel", "3"}, 1, ""},
        {{"analyze", wav, "--format", "xml"}, 2, ""},
    };
    for (const Case& c : cases) {
        CAPTURE(c.args.back());
        const auto r = run_program(c.args);
        CHECK(r.exit_code == c.code);
        CHECK(r.out.empty());
        CHECK(beatless::test::line_count(r.err) == 1);
        if (!c.err.empty()) CHECK(r.err == c.err);
    }
}
