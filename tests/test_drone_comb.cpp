// DroneComb on signals with exactly known content.
//
// Sources: the comb y[n] = x[n] - x[n - D] + g y[n - D] has the magnitude
// response |H(f)| = |1 - e^{-jw D}| / |1 - g e^{-jw D}|, w = 2 pi f / rate,
// that is 2 |sin(w D / 2)| / sqrt(1 - 2 g cos(w D) + g^2) (J. O. Smith,
// Physical Audio Signal Processing, W3K 2010, "Feedforward Comb Filters",
// "Feedback Comb Filters"): zeros on every harmonic of rate / D; for g = 0
// (the analysis's) the feedforward comb's 2 |sin(pi f D / rate)|. Any linear
// time-invariant filter maps a periodic signal to a periodic signal of the
// same period (textbook: a sum of harmonics stays a sum of the same
// harmonics, each scaled), so a tracker finds the same f0 after it. The YIN tracker is pitch/yin.h.
#include "pitch/base/error.h"
#include "pitch/dsp/drone_comb.h"
#include "pitch/dsp/yin.h"
#include "tests/mix_signals.h"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <vector>

using namespace beatless;
using namespace beatless::pitch;
using namespace beatless::testsig;

namespace {
constexpr double kFs = 44100.0;

std::vector<float> comb(const std::vector<float>& x, double root_hz, std::size_t block = 4096,
                        double feedback = DroneCombConfig{}.feedback) {
    DroneComb c({.sample_rate_hz = kFs, .root_hz = root_hz, .feedback = feedback});
    std::vector<float> y(x.size());
    for (std::size_t i = 0; i < x.size(); i += block) {
        const std::size_t n = std::min(block, x.size() - i);
        c.process(std::span<const float>(x.data() + i, n), std::span<float>(y.data() + i, n));
    }
    return y;
}

double rms(const std::vector<float>& x, std::size_t from, std::size_t to) {
    double s = 0.0;
    for (std::size_t i = from; i < to; ++i) s += static_cast<double>(x[i]) * x[i];
    return std::sqrt(s / static_cast<double>(to - from));
}

double median_f0(const std::vector<float>& x, double t0, double t1) {
    YinConfig yc;
    yc.sample_rate_hz = kFs;
    YinTracker yin(yc);
    std::vector<double> f;
    PitchFrame fr;
    for (std::size_t i = 0; i < x.size(); i += 4096) {
        yin.push(std::span<const float>(x.data() + i, std::min<std::size_t>(4096, x.size() - i)));
        while (yin.pull(fr))
            if (fr.t_s > t0 && fr.t_s < t1 && fr.voiced()) f.push_back(fr.f0_hz);
    }
    if (f.empty()) return NAN;
    std::nth_element(f.begin(), f.begin() + static_cast<std::ptrdiff_t>(f.size() / 2), f.end());
    return f[f.size() / 2];
}
}  // namespace

TEST_CASE("the comb's gain on a sine is 2 |sin(w D / 2)| / sqrt(1 - 2 g cos(w D) + g^2)") {
    for (double g : {DroneCombConfig{}.feedback, 0.5})
        for (double root : {110.0, 146.8324, 87.31, 261.6256}) {
            const double d = kFs / root;
            for (double f : {50.0, 137.3, 333.0, 1000.0, 2500.0, 4000.0, 7000.0}) {
                std::vector<float> x(static_cast<std::size_t>(kFs), 0.0f);
                for (std::size_t i = 0; i < x.size(); ++i)
                    x[i] = static_cast<float>(0.5 * std::sin(kTwoPi * f * static_cast<double>(i) / kFs));
                const auto y = comb(x, root, 4096, g);
                const double gain = rms(y, x.size() / 2, x.size()) / rms(x, x.size() / 2, x.size());
                const double wd = kTwoPi * f * d / kFs;
                const double expect =
                    2.0 * std::fabs(std::sin(0.5 * wd)) / std::sqrt(1.0 - 2.0 * g * std::cos(wd) + g * g);
                CAPTURE(g);
                CAPTURE(root);
                CAPTURE(f);
                // Third-order Lagrange interpolation is nearly exact at low
                // frequencies and droops towards the top (a few tenths of a
                // percent of full gain to 4 kHz, under 2 % at 7 kHz).
                CHECK(std::fabs(gain - expect) < (f <= 4000.0 ? 0.005 : 0.02));
            }
        }
}

TEST_CASE("a steady drone of any timbre vanishes; a voice at a just ratio keeps its f0") {
    for (double root : {110.0, 146.8324, 87.31}) {
        CAPTURE(root);
        const double dur = 3.0;
        std::vector<float> drone(static_cast<std::size_t>(dur * kFs), 0.0f);
        add_tone(drone, kFs, root, 0.0, dur, 0.2, rolloff(12, 0.7),
                 {0.3, 1.1, 2.0, 0.7, 2.9, 1.6, 0.2, 2.4, 1.0, 0.5, 2.2, 1.3});
        const auto gone = comb(drone, root);
        const std::size_t a = static_cast<std::size_t>(0.1 * kFs), b = static_cast<std::size_t>((dur - 0.1) * kFs);
        const double atten_db = 20.0 * std::log10(rms(gone, a, b) / rms(drone, a, b));
        MESSAGE("drone at " << root << " Hz: " << atten_db << " dB left");
        CHECK(atten_db < -60.0);

        // A voice a septimal tritone and an octave above (14/5), louder than the drone.
        std::vector<float> voice(drone.size(), 0.0f);
        const double f_voice = root * 14.0 / 5.0 * std::exp2(-6.0 / 1200.0);
        add_tone(voice, kFs, f_voice, 0.0, dur, 0.25, {1.0, 0.6, 0.45, 0.3, 0.2, 0.15, 0.1, 0.08});
        std::vector<float> mix(drone.size());
        for (std::size_t i = 0; i < mix.size(); ++i) mix[i] = drone[i] + voice[i];
        const double f_alone = median_f0(voice, 0.2, dur - 0.2);
        const double f_through = median_f0(comb(mix, root), 0.2, dur - 0.2);
        CHECK(std::fabs(1200.0 * std::log2(f_alone / f_voice)) < 0.05);
        CHECK(std::fabs(1200.0 * std::log2(f_through / f_voice)) < 0.1);
    }
}

TEST_CASE("block size does not change the output; reset forgets the history") {
    std::vector<float> x(20000, 0.0f);
    add_noise(x, 0.1, 3);
    const auto a = comb(x, 97.0, 1);
    const auto b = comb(x, 97.0, 777);
    CHECK(a == b);
    DroneComb c({.sample_rate_hz = kFs, .root_hz = 97.0});
    std::vector<float> y(x.size());
    c.process(x, y);
    c.reset();
    std::vector<float> z(x.size());
    c.process(x, z);
    CHECK(y == z);
    // In place gives the same samples.
    std::vector<float> w = x;
    DroneComb d({.sample_rate_hz = kFs, .root_hz = 97.0});
    d.process(w, w);
    CHECK(w == y);
    CHECK(d.delay_samples() == doctest::Approx(kFs / 97.0));
}

TEST_CASE("bad settings: one line naming the value") {
    CHECK(error_of<Error>([] { DroneComb({.sample_rate_hz = 1000.0, .root_hz = 110.0}); }) ==
          "drone filter: sample rate 1000 Hz is out of range (8000 to 192000)");
    CHECK(error_of<Error>([] { DroneComb({.sample_rate_hz = 44100.0, .root_hz = 10.0}); }) ==
          "drone filter: root 10 Hz is out of range (20 Hz to 5512 Hz at this sample rate)");
    CHECK(error_of<Error>([] {
              DroneComb({.sample_rate_hz = 44100.0, .root_hz = NAN});
          }).rfind("drone filter: root nan", 0) == 0);
}
