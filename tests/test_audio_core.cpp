// Sound files (libsndfile) and the harmonic synthesizer.
//
// References: the synthesizer is checked sample by sample against the
// closed form sum_k a_k sin(2 pi k f0 n / fs) computed here in double
// precision; band limiting and ramps against their definitions; files
// against the samples written (round trip through each container).
#include "audio/soundfile.h"
#include "audio/synth.h"
#include "audio/timbre.h"
#include "pitch/base/error.h"
#include "tests/cli.h"

#include <doctest/doctest.h>
#include <sndfile.h>

#include <cmath>
#include <fstream>
#include <numbers>

using namespace beatless;
using namespace beatless::audio;

namespace {

std::vector<float> test_signal(std::size_t n, double fs) {
    std::vector<float> x(n);
    for (std::size_t i = 0; i < n; ++i)
        x[i] = static_cast<float>(0.5 * std::sin(2 * std::numbers::pi * 440.0 * i / fs));
    return x;
}

void write_with_format(const std::string& path, int format, const std::vector<float>& interleaved, int channels,
                       int rate) {
    SF_INFO info{};
    info.samplerate = rate;
    info.channels = channels;
    info.format = format;
    SNDFILE* f = sf_open(path.c_str(), SFM_WRITE, &info);
    REQUIRE_MESSAGE(f != nullptr, sf_strerror(nullptr));
    sf_writef_float(f, interleaved.data(), static_cast<sf_count_t>(interleaved.size() / channels));
    sf_close(f);
}

std::string error_of(const std::string& path, int channel = -1) {
    try {
        SoundReader r(path, channel);
        for (auto b = r.read(); !b.empty(); b = r.read()) {}
    } catch (const Error& e) {
        return e.what();
    }
    return "(no error)";
}

}  // namespace

TEST_CASE("WAV, FLAC, AIFF and Ogg files round-trip through the reader") {
    test::TempDir dir;
    const int rate = 44100;
    const auto x = test_signal(10000, rate);
    struct Case {
        const char* name;
        int format;
        double tolerance;  // quantisation of the container
    } cases[] = {
        {"a.wav", SF_FORMAT_WAV | SF_FORMAT_FLOAT, 1e-7},
        {"a.flac", SF_FORMAT_FLAC | SF_FORMAT_PCM_24, 2e-7},
        {"a.aiff", SF_FORMAT_AIFF | SF_FORMAT_PCM_16, 4e-5},
        {"a.ogg", SF_FORMAT_OGG | SF_FORMAT_VORBIS, 0.05},  // lossy
    };
    for (const auto& c : cases) {
        CAPTURE(c.name);
        write_with_format(dir.file(c.name), c.format, x, 1, rate);
        double got_rate = 0;
        const auto y = SoundReader::read_all(dir.file(c.name), -1, &got_rate);
        CHECK(got_rate == rate);
        REQUIRE(y.size() == x.size());
        double max_err = 0;
        for (std::size_t i = 2000; i < x.size() - 2000; ++i)
            max_err = std::max(max_err, std::fabs(double(y[i]) - x[i]));
        CHECK(max_err < c.tolerance);
    }
}

TEST_CASE("channels: mixed to mono or picked, streamed in blocks") {
    test::TempDir dir;
    std::vector<float> st(2 * 9000);
    for (std::size_t i = 0; i < 9000; ++i) {
        st[2 * i] = 0.25f;
        st[2 * i + 1] = -0.75f;
    }
    write_with_format(dir.file("s.wav"), SF_FORMAT_WAV | SF_FORMAT_FLOAT, st, 2, 48000);
    SoundReader mix(dir.file("s.wav"), -1, 1000);
    CHECK(mix.info().channels == 2);
    CHECK(mix.info().len_frames == 9000);
    std::size_t blocks = 0, total = 0;
    for (auto b = mix.read(); !b.empty(); b = mix.read()) {
        CHECK(b.size() <= 1000);
        CHECK(b[0] == doctest::Approx(-0.25));
        ++blocks;
        total += b.size();
    }
    CHECK(blocks == 9);
    CHECK(total == 9000);
    const auto right = SoundReader::read_all(dir.file("s.wav"), 1);
    CHECK(right[100] == doctest::Approx(-0.75));
}

TEST_CASE("bad sound files give one-line messages naming the file") {
    test::TempDir dir;
    CHECK(error_of(dir.file("missing.wav")) == dir.file("missing.wav") + ": no such file");
    { std::ofstream(dir.file("empty.wav")); }
    CHECK(error_of(dir.file("empty.wav")) == dir.file("empty.wav") + ": is empty (0 bytes)");
    { std::ofstream(dir.file("notes.txt")) << "this is not audio, just text\n"; }
    CHECK(error_of(dir.file("notes.txt")).rfind(dir.file("notes.txt") + ": not a sound file that can be read (", 0) ==
          0);
    write_with_format(dir.file("zero.wav"), SF_FORMAT_WAV | SF_FORMAT_PCM_16, {}, 1, 44100);
    CHECK(error_of(dir.file("zero.wav")) == dir.file("zero.wav") + ": contains no audio (0 frames)");
    write_with_format(dir.file("low.wav"), SF_FORMAT_WAV | SF_FORMAT_PCM_16, test_signal(100, 4000), 1, 4000);
    CHECK(error_of(dir.file("low.wav")) ==
          dir.file("low.wav") + ": sample rate 4000 Hz is not supported (8000 Hz to 192000 Hz)");
    write_with_format(dir.file("mono.wav"), SF_FORMAT_WAV | SF_FORMAT_PCM_16, test_signal(100, 44100), 1, 44100);
    CHECK(error_of(dir.file("mono.wav"), 2) ==
          dir.file("mono.wav") + ": channel 3 does not exist (the file has 1 channel)");
    auto x = test_signal(44100, 44100);
    x[22050] = std::numeric_limits<float>::quiet_NaN();
    write_with_format(dir.file("nan.wav"), SF_FORMAT_WAV | SF_FORMAT_FLOAT, x, 1, 44100);
    CHECK(error_of(dir.file("nan.wav")) ==
          dir.file("nan.wav") + ": contains a non-finite sample (NaN or infinity) at 0.5 s");
    x[22050] = std::numeric_limits<float>::infinity();
    write_with_format(dir.file("inf.wav"), SF_FORMAT_WAV | SF_FORMAT_FLOAT, x, 1, 44100);
    CHECK(error_of(dir.file("inf.wav")) ==
          dir.file("inf.wav") + ": contains a non-finite sample (NaN or infinity) at 0.5 s");
}

TEST_CASE("the synthesizer matches the closed form of a harmonic tone") {
    const double fs = 48000.0;
    SynthConfig cfg;
    cfg.sample_rate_hz = fs;
    cfg.max_partials = 8;
    HarmonicSynth s(cfg);
    const std::vector<double> amps = {1.0, 0.5, 0.25, 0.125, 0.0, 0.1, 0.05, 0.02};
    const std::vector<double> phases = {0.0, 1.0, 2.0, 0.5, 0.0, 3.0, 1.5, 0.2};
    s.set_f0(261.6256, true);
    s.set_partials(amps, true);
    s.set_phases(phases);
    s.set_level(0.3, true);
    std::vector<float> out(48000, 0.0f);
    s.render_add(out);
    double max_err = 0;
    for (std::size_t n = 0; n < out.size(); ++n) {
        double ref = 0;
        for (std::size_t k = 0; k < amps.size(); ++k)
            ref += amps[k] * std::sin(2 * std::numbers::pi * (k + 1) * 261.6256 * n / fs + phases[k]);
        max_err = std::max(max_err, std::fabs(0.3 * ref - out[n]));
    }
    CHECK(max_err < 1e-5);  // float output, double arithmetic
}

TEST_CASE("changes ramp over 50 ms without steps") {
    const double fs = 48000.0;
    HarmonicSynth s(SynthConfig{fs, 4, 0.05});
    s.set_f0(1000.0, true);
    s.set_partials(std::vector<double>{1.0}, true);
    s.set_level(0.5);  // from silence
    std::vector<float> out(4800, 0.0f);
    s.render_add(out);
    // The envelope grows linearly over 2400 samples: the peak in the first
    // 1 ms is tiny, the level at 50 ms is reached, and no sample jumps by
    // more than the slope of a 1 kHz sine at full level allows.
    float early = 0, late = 0, max_step = 0;
    for (std::size_t i = 0; i < 48; ++i) early = std::max(early, std::fabs(out[i]));
    for (std::size_t i = 2400; i < 4800; ++i) late = std::max(late, std::fabs(out[i]));
    for (std::size_t i = 1; i < out.size(); ++i) max_step = std::max(max_step, std::fabs(out[i] - out[i - 1]));
    CHECK(early < 0.5 * 48.0 / 2400.0 + 1e-6);
    CHECK(late == doctest::Approx(0.5).epsilon(1e-3));
    CHECK(max_step <= 0.5 * 2 * std::numbers::pi * 1000.0 / fs + 1e-4);
    CHECK_FALSE(s.ramping());
    // A new f0 glides: after 25 ms it lies between the two, geometrically.
    s.set_f0(2000.0);
    std::vector<float> half(1200, 0.0f);
    s.render_add(half);
    CHECK(s.f0_hz() == doctest::Approx(1000.0 * std::sqrt(2.0)).epsilon(1e-6));
}

TEST_CASE("no partial passes Nyquist") {
    // A 32-partial tone at 2 kHz at 44.1 kHz: partials 10 (20 kHz) and up
    // would pass 0.45 fs; their energy must be absent. Project the output on
    // each partial's frequency (a single-bin DFT over whole periods).
    const double fs = 44100.0, f0 = 2000.0;
    HarmonicSynth s(SynthConfig{fs, 32, 0.05});
    s.set_f0(f0, true);
    s.set_partials(timbre_partials(Timbre::bright), true);
    s.set_level(1.0, true);
    std::vector<float> out(44100, 0.0f);
    s.render_add(out);
    auto amplitude_at = [&](double f) {
        double re = 0, im = 0;
        for (std::size_t n = 0; n < out.size(); ++n) {
            re += out[n] * std::cos(2 * std::numbers::pi * f * n / fs);
            im += out[n] * std::sin(2 * std::numbers::pi * f * n / fs);
        }
        return 2 * std::hypot(re, im) / out.size();
    };
    const auto a = timbre_partials(Timbre::bright);
    CHECK(amplitude_at(f0) == doctest::Approx(a[0]).epsilon(1e-3));
    CHECK(band_limit_gain(9 * f0, fs) ==
          doctest::Approx(0.5 + 0.5 * std::cos(std::numbers::pi * (18000.0 / fs - 0.40) / 0.05)));
    // Partial 12 would be at 24 kHz, folding back to 20.1 kHz; nothing there.
    CHECK(amplitude_at(fs - 12 * f0) < 1e-5);
    CHECK(amplitude_at(fs - 11 * f0) < 1e-5);
}

TEST_CASE("timbres have the RMS of a unit sine and known names") {
    for (Timbre t : all_timbres()) {
        double p = 0;
        for (double a : timbre_partials(t)) p += a * a;
        CHECK(p == doctest::Approx(1.0));
        CHECK(parse_timbre(timbre_name(t)) == t);
    }
    CHECK_THROWS_WITH(parse_timbre("loud"), "timbre 'loud': unknown (choose pure, soft, round, bright, hollow)");
}
