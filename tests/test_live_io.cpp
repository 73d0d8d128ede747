// LiveIo: the plumbing both live engines share — the drone's fan-out to
// every output channel in scratch-sized chunks, the callback counters and
// the watchdog's stall check, the reading outlet, and the run_fast loop.
// Expected values are worked out by hand from the definitions (common practice).
#include "audio/live_io.h"

#include <doctest/doctest.h>

#include <chrono>
#include <cmath>
#include <vector>

using namespace beatless;
using audio::LiveIo;

namespace {
audio::DroneSettings sounding() {
    audio::DroneSettings s;
    s.on = true;
    s.root_hz = 220.0;
    s.fifth = true;
    return s;
}
}  // namespace

TEST_CASE(
    "live io: the drone goes to every output channel, chunked by the scratch, sample for sample as rendered alone") {
    constexpr double rate = 48000.0;
    constexpr std::size_t frames = 1000;  // in calls of 400 and 600: chunks of 300, 100, then 300, 300
    constexpr int channels = 3;
    LiveIo io;
    io.play_scratch.assign(300, 0.0f);
    io.out_drone = std::make_unique<audio::Drone>(rate);
    io.out_drone->set(sounding());
    audio::Drone alone(rate);
    alone.set(sounding());

    std::vector<float> out(frames * channels, 9.0f);
    // Two calls, so the second starts where the first ended.
    io.play(out.data(), 400, channels);
    io.play(out.data() + 400 * channels, frames - 400, channels);

    std::vector<float> mono(frames, 0.0f);
    for (std::size_t done = 0, call_end = 400; done < frames;) {
        const std::size_t n = std::min<std::size_t>(std::min<std::size_t>(300, call_end - done), frames - done);
        alone.render(std::span<float>(mono.data() + done, n));
        done += n;
        if (done == call_end) call_end = frames;
    }
    double energy = 0.0;
    for (std::size_t i = 0; i < frames; ++i) {
        energy += static_cast<double>(mono[i]) * mono[i];
        for (int c = 0; c < channels; ++c) REQUIRE(out[i * channels + static_cast<std::size_t>(c)] == mono[i]);
    }
    CHECK(energy > 0.0);  // the drone really sounded (its 50 ms start ramp has begun)
}

TEST_CASE("live io: without a drone (or before its scratch is sized) the output is silence") {
    LiveIo io;
    std::vector<float> out(64 * 2, 1.0f);
    io.play(out.data(), 64, 2);
    for (float v : out) CHECK(v == 0.0f);

    io.out_drone = std::make_unique<audio::Drone>(48000.0);
    io.out_drone->set(sounding());
    std::fill(out.begin(), out.end(), 1.0f);
    io.play(out.data(), 64, 2);  // play_scratch still empty: must not spin, must not read past it
    for (float v : out) CHECK(v == 0.0f);

    // Channels below 1 count as one.
    std::vector<float> one(8, 1.0f);
    LiveIo quiet;
    quiet.play(one.data(), 8, 0);
    for (float v : one) CHECK(v == 0.0f);
}

TEST_CASE("live io: host overflows and underflows are counted and reported") {
    LiveIo io;
    io.count_xrun(true, false);
    io.count_xrun(true, true);
    io.count_xrun(false, false);
    io.count_xrun(false, true);
    io.count_xrun(false, true);
    audio::LiveStatus st;
    io.report(st);
    CHECK(st.device_input_overflows == 2);
    CHECK(st.device_output_underflows == 3);
}

TEST_CASE("live io: the watchdog sees a stall only after stall_s without a callback") {
    using Clock = LiveIo::Clock;
    LiveIo io;
    const Clock::time_point t0 = Clock::now();
    io.watch_from(t0);
    io.count_callback();
    CHECK_FALSE(io.stalled(t0 + std::chrono::milliseconds(500), 1.0, 3.0));   // a new callback: seen now
    CHECK_FALSE(io.stalled(t0 + std::chrono::milliseconds(1400), 1.0, 3.0));  // 0.9 s since
    CHECK(io.stalled(t0 + std::chrono::milliseconds(1600), 1.0, 3.0));        // 1.1 s since
    io.count_callback();
    CHECK_FALSE(io.stalled(t0 + std::chrono::milliseconds(1700), 1.0, 3.0));  // flowing again
    CHECK(io.seen_callbacks == 2);
}

TEST_CASE("live io: a stream just opened is given first_callback_s for its first callback, then stall_s") {
    // ALSA's pulse plugin under PortAudio calls back first ~1 s after the
    // stream starts (seen in this project's alsa_live test), so a 1-s watchdog
    // would drop it before it ever spoke.
    using Clock = LiveIo::Clock;
    LiveIo io;
    io.count_callback();  // callbacks of an earlier stream count for nothing
    const Clock::time_point t0 = Clock::now();
    io.watch_from(t0);
    CHECK_FALSE(io.stalled(t0 + std::chrono::milliseconds(1500), 1.0, 3.0));  // silent 1.5 s: still starting
    CHECK(io.stalled(t0 + std::chrono::milliseconds(3100), 1.0, 3.0));        // silent 3.1 s: gone
    io.watch_from(t0);
    io.count_callback();
    CHECK_FALSE(io.stalled(t0 + std::chrono::milliseconds(1200), 1.0, 3.0));  // first callback seen at 1.2 s
    CHECK(io.stalled(t0 + std::chrono::milliseconds(2300), 1.0, 3.0));        // then 1.1 s silent: gone
}

namespace {
struct Mark {
    double t_s = 0.0;
};
}  // namespace

TEST_CASE(
    "live io: the outlet publishes to latest, history and stream, counts what the stream drops, keeps the largest "
    "latency") {
    audio::ReadingOutlet<Mark, 4> outlet(2);  // the stream holds 2
    for (int i = 0; i < 5; ++i) outlet.publish(Mark{0.1 * i}, i == 2 ? 0.050 : 0.010 + 0.001 * i);
    audio::LiveStatus st;
    outlet.report(st);
    CHECK(st.readings == 5);
    CHECK(st.readings_dropped == 3);
    CHECK(st.latency_s == doctest::Approx(0.014));
    CHECK(st.latency_max_s == doctest::Approx(0.050));
    Mark m;
    REQUIRE(outlet.latest.read(m));
    CHECK(m.t_s == doctest::Approx(0.4));
    Mark h[4];
    REQUIRE(outlet.history.read(std::span<Mark>(h)) == 3);  // Recent<_, 4> keeps the newest 3
    CHECK(h[0].t_s == doctest::Approx(0.2));
    CHECK(h[2].t_s == doctest::Approx(0.4));
    Mark s[4];
    REQUIRE(outlet.stream.read(std::span<Mark>(s)) == 2);
    CHECK(s[0].t_s == doctest::Approx(0.0));  // the first two; later ones found it full
    CHECK(s[1].t_s == doctest::Approx(0.1));
}

TEST_CASE("live io: run_fast feeds every block, then the silent tail, and passes readings up to max_s") {
    LiveIo io;
    std::vector<float> scratch(2 * 4);  // 4 frames of 2 channels
    int blocks_left = 3;
    std::vector<std::size_t> fed;
    std::vector<float> fed_first;
    std::vector<Mark> pending;
    double time_s = 0.0;
    std::vector<double> seen;
    const std::function<void(const Mark&)> on = [&](const Mark& r) { seen.push_back(r.t_s); };
    Mark got[2];
    const auto take_pending = [&](std::span<Mark> g) {
        const std::size_t k = std::min(g.size(), pending.size());
        std::copy_n(pending.begin(), k, g.begin());
        pending.erase(pending.begin(), pending.begin() + static_cast<std::ptrdiff_t>(k));
        return k;
    };
    io.run_fast<Mark>(
        std::span<float>(scratch), 2, 6, std::span<Mark>(got), 0.0, on,
        [&](std::span<float> b) -> std::size_t {
            if (blocks_left == 0) return 0;
            --blocks_left;
            std::fill(b.begin(), b.end(), 1.0f);
            return 4;
        },
        [&](const float* data, std::size_t n) {
            fed.push_back(n);
            fed_first.push_back(data[0]);
            time_s += static_cast<double>(n) / 10.0;
            pending.push_back(Mark{time_s});
            pending.push_back(Mark{time_s + 0.01});
            pending.push_back(Mark{time_s + 0.02});  // more than `got` holds: drained in turns
        },
        take_pending, [&] { return time_s; });
    CHECK(fed == std::vector<std::size_t>{4, 4, 4, 4, 2});  // three blocks, then 6 frames of tail
    CHECK(fed_first == std::vector<float>{1.0f, 1.0f, 1.0f, 0.0f, 0.0f});
    CHECK(seen.size() == 15);

    // With max_s: readings after it are not passed on, and it stops once time passes max_s + 0.2 s.
    blocks_left = 100;
    fed.clear();
    seen.clear();
    time_s = 0.0;
    io.run_fast<Mark>(
        std::span<float>(scratch), 2, 6, std::span<Mark>(got), 0.5, on,
        [&](std::span<float> b) -> std::size_t {
            std::fill(b.begin(), b.end(), 1.0f);
            return 4;
        },
        [&](const float*, std::size_t n) {
            time_s += static_cast<double>(n) / 10.0;
            pending.push_back(Mark{time_s});
        },
        take_pending, [&] { return time_s; });
    CHECK(seen == std::vector<double>{0.4});  // 0.4 passes; 0.8 does not, and 0.8 >= 0.7 ends it
}

TEST_CASE("live io: a read error ends run_fast with the reader's message") {
    LiveIo io;
    std::vector<float> scratch(4);
    Mark got[1];
    const std::function<void(const Mark&)> on = [](const Mark&) {};
    auto failing = [&](std::span<float> b) {
        return io.read_block(b, []() -> std::span<const float> { throw Error("take.wav: read failed"); });
    };
    CHECK_THROWS_WITH_AS(
        io.run_fast<Mark>(
            std::span<float>(scratch), 1, 0, std::span<Mark>(got), 0.0, on, failing, [](const float*, std::size_t) {},
            [](std::span<Mark>) { return std::size_t{0}; }, [] { return 0.0; }),
        "take.wav: read failed", Error);
    CHECK(io.producer_done.load());
}
