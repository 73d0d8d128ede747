// The drone (partials, level, ramps, limiter, reference voice), drone
// removal on its own, and the lock-free ring and publication.
//
// References: a partial's amplitude is measured by projecting the output on
// sin and cos at its exact frequency over whole periods (the DFT of a
// periodic signal, computed here in double precision); RMS of a unit-peak
// sine is 1/sqrt(2), so a tone at L dBFS RMS has RMS 10^(L/20); the ceiling
// is -6 dBFS peak = 10^(-6/20) (the definition of dBFS).
#include "audio/drone.h"
#include "audio/drone_removal.h"
#include "audio/latest.h"
#include "audio/ring.h"
#include "audio/room.h"
#include "audio/timbre.h"
#include "pitch/base/error.h"
#include "pitch/measure/reading.h"

#include <doctest/doctest.h>

#include <atomic>
#include <cmath>
#include <numbers>
#include <thread>
#include <vector>

using namespace beatless;
using namespace beatless::audio;

namespace {

constexpr double kPi = std::numbers::pi;

// Peak amplitude of the component at freq_hz in x[from, from + n).
double amplitude_at(const std::vector<float>& x, std::size_t from, std::size_t n, double freq_hz, double rate) {
    double c = 0.0, s = 0.0;
    for (std::size_t i = 0; i < n; ++i) {
        const double ph = 2.0 * kPi * freq_hz * static_cast<double>(from + i) / rate;
        c += x[from + i] * std::cos(ph);
        s += x[from + i] * std::sin(ph);
    }
    return 2.0 * std::hypot(c, s) / static_cast<double>(n);
}

double rms(const std::vector<float>& x, std::size_t from, std::size_t n) {
    double e = 0.0;
    for (std::size_t i = from; i < from + n; ++i) e += double(x[i]) * x[i];
    return std::sqrt(e / static_cast<double>(n));
}

DroneSettings sounding(Timbre t, double level_dbfs) {
    DroneSettings s;
    s.on = true;
    s.timbre = t;
    s.level_dbfs = level_dbfs;
    return s;
}

std::vector<float> render(Drone& d, std::size_t n, std::size_t block = 256) {
    std::vector<float> out(n);
    for (std::size_t i = 0; i < n; i += block) d.render(std::span<float>(out.data() + i, std::min(block, n - i)));
    return out;
}

// A round drone at -20 dBFS on a 110 Hz root heard through the default room: n samples at the microphone. The
// canceller is told its partials and level.
std::vector<float> drone_at_mic(double rate, std::size_t n, DroneCanceller& c) {
    Drone d(rate);
    const DroneSettings s = sounding(Timbre::round, -20.0);
    d.set(s);
    DronePartial parts[64];
    c.set_partials(std::span<const DronePartial>(parts, drone_partials(s, rate, c.config().max_freq_hz, parts)));
    c.set_level(drone_gain(s.level_dbfs));
    SimulatedRoom room(RoomConfig{});
    const auto spk = render(d, n);
    std::vector<float> mic(n, 0.0f);
    room.process_add(spk, mic);
    return mic;
}

}  // namespace

TEST_CASE("the drone plays the partials drone_partials lists, at the level asked") {
    const double rate = 44000.0;  // 110 Hz = exactly 400 samples a period
    for (Timbre t : all_timbres()) {
        CAPTURE(timbre_name(t));
        Drone d(rate);
        DroneSettings s;
        s.on = true;
        s.root_hz = 110.0;
        s.timbre = t;
        s.octave = true;
        s.level_dbfs = -20.0;
        d.set(s);
        const auto x = render(d, 44000);
        DronePartial parts[128];
        const std::size_t n = drone_partials(s, rate, 20000.0, parts);
        REQUIRE(n >= 1);
        const double g = drone_gain(-20.0);
        for (std::size_t k = 0; k < n; ++k) {
            CAPTURE(parts[k].freq_hz);
            CHECK(amplitude_at(x, 22000, 22000, parts[k].freq_hz, rate) ==
                  doctest::Approx(g * parts[k].amplitude).epsilon(0.01));
        }
        // Nothing between the partials (166 Hz: a whole number of cycles in the window).
        CHECK(amplitude_at(x, 22000, 22000, 166.0, rate) < 1e-4);
        // RMS of a sum of sines: sqrt(sum a^2 / 2); the root alone (octave off) at -20 dBFS RMS.
        double p2 = 0.0;
        for (std::size_t k = 0; k < n; ++k) p2 += g * g * parts[k].amplitude * parts[k].amplitude / 2.0;
        CHECK(rms(x, 22000, 22000) == doctest::Approx(std::sqrt(p2)).epsilon(0.01));
    }
    {
        Drone d(rate);
        d.set(sounding(Timbre::bright, -20.0));
        const auto x = render(d, 44000);
        CHECK(rms(x, 22000, 22000) == doctest::Approx(std::pow(10.0, -20.0 / 20.0)).epsilon(0.01));
    }
    // The fifth's partials sit at 3/2 of the root's.
    DroneSettings s;
    s.fifth = true;
    s.timbre = Timbre::pure;
    DronePartial parts[8];
    REQUIRE(drone_partials(s, 48000.0, 20000.0, parts) == 2);
    CHECK(parts[0].freq_hz == 110.0);
    CHECK(parts[1].freq_hz == 165.0);
    // Band limit: no partial at or above 0.45 of the rate.
    s.timbre = Timbre::bright;
    s.root_hz = 1000.0;
    DronePartial many[128];
    const std::size_t n = drone_partials(s, 8000.0, 20000.0, many);
    for (std::size_t k = 0; k < n; ++k) CHECK(many[k].freq_hz < 0.45 * 8000.0);
}

TEST_CASE("the drone starts quiet, ramps every change over about 50 ms, and never clicks") {
    const double rate = 48000.0;
    Drone d(rate);
    DroneSettings s;
    CHECK(s.level_dbfs == kDroneStartLevelDbfs);
    CHECK(s.level_dbfs <= -30.0);
    s.on = true;
    s.timbre = Timbre::bright;
    d.set(s);
    auto x = render(d, 24000);
    // RMS in 5 ms windows rises over the ramp: low at 10 ms, full by 60 ms.
    const double full = rms(x, 12000, 12000);
    CHECK(full == doctest::Approx(std::pow(10.0, -30.0 / 20.0)).epsilon(0.02));
    CHECK(rms(x, 0, 240) < 0.1 * full);
    CHECK(rms(x, 480, 240) < 0.5 * full);
    CHECK(rms(x, 3000, 240) > 0.9 * full);
    // The steepest sample-to-sample step of the steady tone bounds every change.
    auto max_step = [](const std::vector<float>& v, std::size_t a, std::size_t b) {
        double m = 0.0;
        for (std::size_t i = a + 1; i < b; ++i) m = std::max(m, std::fabs(double(v[i]) - v[i - 1]));
        return m;
    };
    const double steady = max_step(x, 12000, 24000);
    REQUIRE(steady > 0.0);
    CHECK(max_step(x, 0, 12000) <= 1.05 * steady);
    for (int change = 0; change < 4; ++change) {
        CAPTURE(change);
        if (change == 0) s.root_hz = 146.83;         // a new root glides
        if (change == 1) s.timbre = Timbre::hollow;  // a new timbre crossfades
        if (change == 2) s.level_dbfs = -24.0;       // a louder level ramps
        if (change == 3) s.on = false;               // stop ramps down
        d.set(s);
        const auto y = render(d, 9600);
        CHECK(max_step(y, 0, 9600) <= 2.0 * steady);
        if (change == 3) CHECK(rms(y, 4800, 4800) < 1e-6);
    }
}

TEST_CASE("the limiter holds a fixed ceiling of -6 dBFS") {
    const double rate = 48000.0;
    Drone d(rate);
    DroneSettings s =
        sounding(Timbre::bright, kDroneMaxLevelDbfs);  // as loud as allowed: the partials add far above the ceiling
    s.fifth = true;
    s.octave = true;
    d.set(s);
    const auto x = render(d, 48000);
    float peak = 0.0f;
    for (float v : x) peak = std::max(peak, std::fabs(v));
    CHECK(peak <= static_cast<float>(std::pow(10.0, kDroneCeilingDbfs / 20.0)));
    CHECK(peak > 0.45f);
    CHECK(d.limiter_gain() < 0.9);
    CHECK_THROWS_AS(check_drone_settings([] {
                        DroneSettings t;
                        t.level_dbfs = 0.0;
                        return t;
                    }()),
                    beatless::Error);
}

TEST_CASE("the reference voice sounds the target for a moment above the drone") {
    const double rate = 44000.0;
    Drone d(rate);
    DroneSettings s = sounding(Timbre::pure, kDroneStartLevelDbfs);
    d.set(s);
    render(d, 4400);
    s.reference_hz = 154.0;
    s.reference_s = 1.0;
    s.reference_count = 1;
    d.set(s);
    const auto x = render(d, 88000);
    // Half-second windows: 154 and 110 Hz both fit whole cycles.
    const double during = amplitude_at(x, 4400, 22000, 154.0, rate);
    const double after = amplitude_at(x, 60000, 22000, 154.0, rate);
    CHECK(during > 0.5 * drone_gain(s.level_dbfs - 3.0) * timbre_partials(Timbre::soft)[0]);
    CHECK(after < 1e-3 * during);
    CHECK(amplitude_at(x, 60000, 22000, 110.0, rate) == doctest::Approx(drone_gain(s.level_dbfs)).epsilon(0.01));
}

TEST_CASE("drone removal: the drone's partials vanish, a voice partial 20 Hz away stays") {
    const double rate = 48000.0;
    CancellerConfig cc;
    cc.sample_rate_hz = rate;
    DroneCanceller c(cc);
    const std::size_t n = 96000;
    std::vector<float> mic = drone_at_mic(rate, n, c);
    // A "voice" partial at 350 Hz (20 Hz from the drone's 330 Hz).
    for (std::size_t i = 0; i < n; ++i)
        mic[i] += static_cast<float>(0.01 * std::sin(2.0 * kPi * 350.0 * static_cast<double>(i) / rate));
    std::vector<float> out(n);
    for (std::size_t i = 0; i < n; i += 256)
        c.process(std::span<const float>(mic.data() + i, 256), std::span<float>(out.data() + i, 256));
    for (double f : {110.0, 220.0, 330.0, 440.0, 880.0}) {
        CAPTURE(f);
        const double before = amplitude_at(mic, 48000, 48000, f, rate);
        CHECK(amplitude_at(out, 48000, 48000, f, rate) < 1e-3 * before);  // at least 60 dB down
    }
    CHECK(amplitude_at(out, 48000, 48000, 350.0, rate) == doctest::Approx(0.01).epsilon(0.02));
    CHECK(c.partial_count() == 12);
    // Silent drone: nothing is removed.
    c.set_level(0.0, true);
    std::vector<float> quiet(4800);
    c.process(std::span<const float>(mic.data(), 4800), quiet);
    for (std::size_t i = 0; i < 4800; ++i) CHECK(quiet[i] == mic[i]);
}

// A just interval puts voice partials exactly on drone partials (a fifth's 2nd partial on the root's 3rd): an LMS
// notch that kept learning while the performer sounds would take that voice partial in with the time constant
// 1 / (2 pi bandwidth) (Widrow et al. 1975), and leave it in the weights after a change of note. The room is learned
// in silence and held while the performer sounds; a short unvoiced stretch at a note change is not a silence.
TEST_CASE("drone removal: a voice partial on a drone partial is kept, and nothing of it is left after a note change") {
    const double rate = 48000.0, root = 110.0;
    CancellerConfig cc;
    cc.sample_rate_hz = rate;
    DroneCanceller c(cc);
    const std::size_t n = 256 * 470, voice_at = 256 * 94, change_at = 256 * 282;  // 2.5 s; at 0.5 s and 1.5 s
    std::vector<float> mic = drone_at_mic(rate, n, c);
    // Voice A at 3/2 (165 Hz: its 330 Hz partial on the drone's 3rd), then voice B at 5/4 (137.5 Hz: none on 330 Hz).
    const double amp[] = {0.02, 0.01, 0.007, 0.005};
    for (std::size_t i = voice_at; i < n; ++i) {
        const double f0 = i < change_at ? 1.5 * root : 1.25 * root, t = static_cast<double>(i) / rate;
        double v = 0.0;
        for (int h = 1; h <= 4; ++h) v += amp[h - 1] * std::sin(2.0 * kPi * h * f0 * t);
        mic[i] += static_cast<float>(v);
    }
    std::vector<float> out(n);
    const std::size_t unvoiced = static_cast<std::size_t>(0.015 * rate) / 256 * 256;  // 15 ms: two notes in one span
    std::vector<double> learned(c.partial_count());
    for (std::size_t i = 0; i < n; i += 256) {
        if (i == voice_at) {
            for (std::size_t k = 0; k < learned.size(); ++k) learned[k] = c.partial_amplitude(k);
            c.set_voice(true, 0);
        }
        if (i == change_at) c.set_voice(false);
        if (i == change_at + unvoiced) c.set_voice(true, unvoiced);
        c.process(std::span<const float>(mic.data() + i, 256), std::span<float>(out.data() + i, 256));
    }
    // The 330 Hz partial of voice A, over its last 0.4 s (whole periods of every partial present, so the
    // projections do not leak): all of it is still there, and the drone's is removed.
    const auto half_s = static_cast<std::size_t>(0.4 * rate);
    CHECK(amplitude_at(out, change_at - half_s, half_s, 330.0, rate) == doctest::Approx(0.01).epsilon(0.03));
    // After the change to B: the drone's 330 Hz partial is removed as before the voice (60 dB down), no trace of A.
    const double drone_330 = amplitude_at(mic, voice_at - half_s, half_s, 330.0, rate);
    CHECK(amplitude_at(out, n - half_s, half_s, 330.0, rate) < 1e-3 * drone_330);
    // The room's response learned in silence is what the weights still hold (within 1 %).
    for (std::size_t k = 0; k < learned.size(); ++k) {
        CAPTURE(k);
        CHECK(c.partial_amplitude(k) == doctest::Approx(learned[k]).epsilon(0.01));
    }
}

TEST_CASE("SPSC ring: every sample arrives once and in order across threads; overflow is counted") {
    SpscRing<float> ring(1000);
    CHECK(ring.capacity() == 1024);
    const std::size_t total = 2'000'000;
    std::thread producer([&] {
        std::vector<float> block(97);
        std::size_t next = 0;
        while (next < total) {
            const std::size_t n = std::min(block.size(), total - next);
            if (ring.space() < n) continue;  // this producer waits; the audio callback would drop
            for (std::size_t i = 0; i < n; ++i) block[i] = static_cast<float>((next + i) % 1000003);
            ring.write(std::span<const float>(block.data(), n));
            next += n;
        }
    });
    std::vector<float> got(300);
    std::size_t seen = 0;
    bool ordered = true;
    while (seen < total) {
        const std::size_t n = ring.read(got);
        for (std::size_t i = 0; i < n; ++i) ordered = ordered && got[i] == static_cast<float>((seen + i) % 1000003);
        seen += n;
    }
    producer.join();
    CHECK(ordered);
    CHECK(ring.overflow_samples() == 0);
    std::vector<float> big(1500, 1.0f);
    CHECK(ring.write(big) == 1024);
    CHECK(ring.overflow_samples() == 476);
    CHECK(ring.overflow_events() == 1);
    CHECK(ring.offered() == total + 1500);
}

TEST_CASE("Latest and History: readers always see whole values while a writer publishes") {
    Latest<pitch::Reading> latest;
    Recent<pitch::Reading, 64> history;
    std::atomic<bool> done{false};
    std::thread writer([&] {
        for (int i = 1; i <= 200000; ++i) {
            pitch::Reading r;
            r.t_s = i;
            r.f0_hz = 2.0 * i;  // a torn copy would break f0 = 2 t
            r.sample_index = 3 * i;
            latest.publish(r);
            history.publish(r);
        }
        done.store(true);
    });
    bool whole = true, increasing = true;
    double last = 0.0;
    pitch::Reading h[32];
    while (!done.load()) {
        pitch::Reading r;
        if (latest.read(r)) {
            whole = whole && r.f0_hz == 2.0 * r.t_s && r.sample_index == static_cast<std::int64_t>(3 * r.t_s);
            increasing = increasing && r.t_s > last;
            last = r.t_s;
        }
        const std::size_t n = history.read(h);
        for (std::size_t i = 0; i < n; ++i) whole = whole && h[i].f0_hz == 2.0 * h[i].t_s;
        for (std::size_t i = 1; i < n; ++i) increasing = increasing && h[i].t_s > h[i - 1].t_s;
    }
    writer.join();
    pitch::Reading r;
    latest.read(r);
    CHECK(r.t_s == 200000.0);
    CHECK(whole);
    CHECK(increasing);
    CHECK(history.read(h) == 32);
    CHECK(h[31].t_s == 200000.0);
}
