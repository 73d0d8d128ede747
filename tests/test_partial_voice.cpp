// PartialVoice: partial amplitudes of a drone (Hann window over whole periods: its spectral zeros fall on the other
// partials, F. J. Harris, "On the use of windows for harmonic analysis with the discrete Fourier transform", Proc.
// IEEE 66(1), 1978: the Hann window's coherent gain 0.5, first zeros at +-2 bins); a voice on a partial is named; a
// drone's own swell, which lifts every partial alike, is not a voice.
#include "pitch/measure/partial_voice.h"
#include "tests/mix_signals.h"

#include <doctest/doctest.h>

#include <cmath>
#include <vector>

using namespace beatless;
using namespace beatless::testsig;

namespace {
constexpr double kFs = 44100.0;
std::vector<float> drone(double dur_s, double level) {
    std::vector<float> x(static_cast<std::size_t>(dur_s * kFs), 0.0f);
    add_tone(x, kFs, 110.0, -1.0, dur_s + 1.0, level, rolloff(8), {0.3, 1.1, 2.0, 0.7, 2.9, 1.6, 0.2, 2.4});
    return x;
}
}  // namespace

TEST_CASE("partial amplitudes: each partial of a 1/n drone reads level / n") {
    const std::vector<float> x = drone(0.3, 0.15);
    const std::vector<double> a = pitch::partial_amplitudes(x, kFs, 110.0, 10);
    for (int k = 1; k <= 8; ++k) {
        CAPTURE(k);
        CHECK(a[static_cast<std::size_t>(k - 1)] == doctest::Approx(0.15 / k).epsilon(0.01));
    }
    CHECK(a[8] < 1e-4);  // partial 9: the drone has none
}

TEST_CASE("a voice on partial 3 is named; the drone louder by 8 dB is not a voice") {
    const pitch::PartialVoiceConfig cfg{.sample_rate_hz = kFs, .drone_hz = 110.0};
    const std::vector<float> alone = drone(0.15, 0.15);
    std::vector<float> with_voice = drone(1.0, 0.15);
    Note n;
    n.start_s = -1.0;
    n.end_s = 2.0;
    n.centre_hz = 330.0;
    n.level = 0.2;
    add_voice(with_voice, kFs, {n}, {1.0, 0.6, 0.45});
    pitch::PartialVoice v;
    REQUIRE(pitch::name_partial(v, with_voice, alone, cfg));
    CHECK(v.partial == 3);
    CHECK(v.f_hz == doctest::Approx(330.0));
    // 20 log10((0.05 + 0.2) / 0.05) = 14.0 dB: the drone's 0.15 / 3 and the voice's 0.2 in phase or not, the
    // window reads their sum's amplitude; between 20 log10(0.15 / 0.05) = 9.5 and 14 dB.
    CHECK(v.partial_rise_db > 9.0);
    CHECK(v.partial_rise_db < 14.1);
    pitch::PartialVoice swell;
    CHECK_FALSE(pitch::name_partial(swell, drone(1.0, 0.15 * std::pow(10.0, 8.0 / 20.0)), alone, cfg));
}

TEST_CASE("levels: a stretch where the raw level rises and the combed level does not is a candidate") {
    pitch::PartialLevels levels(pitch::PartialVoiceConfig{.sample_rate_hz = kFs, .drone_hz = 110.0, .frame_s = 0.02});
    std::vector<float> raw(static_cast<std::size_t>(3.0 * kFs), 0.1f), combed(raw.size(), 0.001f);
    for (std::size_t i = static_cast<std::size_t>(1.0 * kFs); i < static_cast<std::size_t>(2.0 * kFs); ++i)
        raw[i] = 0.2f;  // +6 dB from 1 to 2 s
    levels.push(raw, combed);
    const std::vector<pitch::PartialVoice> c = levels.candidates({});
    REQUIRE(c.size() == 1);
    CHECK(c[0].start_s == doctest::Approx(1.0).epsilon(0.02));
    CHECK(c[0].end_s == doctest::Approx(2.0).epsilon(0.02));
    CHECK(c[0].rise_db == doctest::Approx(20.0 * std::log10(2.0)).epsilon(0.01));
    // The same stretch inside a tracked note is not one; nor is a rise the comb passes (not periodic in the drone's).
    CHECK(levels.candidates({{0.9, 2.1}}).empty());
    pitch::PartialLevels noisy(pitch::PartialVoiceConfig{.sample_rate_hz = kFs, .drone_hz = 110.0});
    noisy.push(raw, raw);
    CHECK(noisy.candidates({}).empty());
}
