// Real-time rules (DESIGN.md): the audio callbacks allocate nothing and take
// no lock, and the analysis allocates nothing per frame once set up.
//
// This test binary interposes the C allocator (malloc, calloc, realloc,
// aligned_alloc, posix_memalign — operator new goes through malloc in
// libstdc++) and the pthread lock calls (mutex lock/trylock, rwlock
// read/write lock), counting calls made while the calling thread is marked
// "watched". The watched sections are the device callbacks (capture and
// playback, with drone changes applied inside them) and the analysis steps
// after warm-up, also with a take being recorded. glibc exports __libc_malloc and friends for exactly this use.
// Under the sanitizers (which interpose the allocator themselves) it is skipped.
#include "audio/engine.h"
#include "audio/soundfile.h"
#include "audio/take_recorder.h"
#include "audio/take_writer.h"
#include "tests/cli.h"
#include "tests/ensemble_signals.h"
#include "tests/live_rig.h"
#include "tests/mix_signals.h"

#include <doctest/doctest.h>

#include <dlfcn.h>
#include <pthread.h>
#include <atomic>
#include <cmath>
#include <cstdlib>

namespace {
[[maybe_unused]] thread_local bool t_watched = false;
[[maybe_unused]] std::atomic<long> g_allocs{0}, g_locks{0};
}  // namespace

#ifndef BEATLESS_SANITIZED
template <class F>
F real(const char* name) {
    return reinterpret_cast<F>(dlsym(RTLD_NEXT, name));
}

extern "C" {
void* __libc_malloc(size_t);
void* __libc_calloc(size_t, size_t);
void* __libc_realloc(void*, size_t);
void* __libc_memalign(size_t, size_t);

void* malloc(size_t n) {
    if (t_watched) g_allocs.fetch_add(1);
    return __libc_malloc(n);
}
void* calloc(size_t a, size_t b) {
    if (t_watched) g_allocs.fetch_add(1);
    return __libc_calloc(a, b);
}
void* realloc(void* p, size_t n) {
    if (t_watched) g_allocs.fetch_add(1);
    return __libc_realloc(p, n);
}
void* aligned_alloc(size_t al, size_t n) {
    if (t_watched) g_allocs.fetch_add(1);
    return __libc_memalign(al, n);
}
int posix_memalign(void** out, size_t al, size_t n) {
    if (t_watched) g_allocs.fetch_add(1);
    *out = __libc_memalign(al, n);
    return *out ? 0 : 12;
}
int pthread_mutex_lock(pthread_mutex_t* m) {
    if (t_watched) g_locks.fetch_add(1);
    static auto f = real<int (*)(pthread_mutex_t*)>("pthread_mutex_lock");
    return f(m);
}
int pthread_mutex_trylock(pthread_mutex_t* m) {
    if (t_watched) g_locks.fetch_add(1);
    static auto f = real<int (*)(pthread_mutex_t*)>("pthread_mutex_trylock");
    return f(m);
}
int pthread_rwlock_rdlock(pthread_rwlock_t* l) {
    if (t_watched) g_locks.fetch_add(1);
    static auto f = real<int (*)(pthread_rwlock_t*)>("pthread_rwlock_rdlock");
    return f(l);
}
int pthread_rwlock_wrlock(pthread_rwlock_t* l) {
    if (t_watched) g_locks.fetch_add(1);
    static auto f = real<int (*)(pthread_rwlock_t*)>("pthread_rwlock_wrlock");
    return f(l);
}
}
#endif

using namespace beatless;

// Allocations and locks counted around the callbacks (every block) and the
// analysis (once warm), for the engine tests below.
struct Counted {
    long cb_allocs = 0, cb_locks = 0, an_allocs = 0, an_locks = 0;
    template <class Drive, class Analyze>
    void block(Drive drive, Analyze analyze, bool warm) {
        long a0 = g_allocs.load(), l0 = g_locks.load();
        t_watched = true;
        drive();
        t_watched = false;
        cb_allocs += g_allocs.load() - a0;
        cb_locks += g_locks.load() - l0;
        a0 = g_allocs.load();
        l0 = g_locks.load();
        t_watched = warm;
        analyze();
        t_watched = false;
        an_allocs += g_allocs.load() - a0;
        an_locks += g_locks.load() - l0;
    }
    void check() const {
        CHECK(cb_allocs == 0);
        CHECK(cb_locks == 0);
        CHECK(an_allocs == 0);
        CHECK(an_locks == 0);
    }
};

// Four players with vibrato and crosstalk (4:5:6:7 over G2) on a fake quad duplex device that plays the drone.
struct QuadRig {
    const pitch::Chord chord = pitch::parse_chord("4:5:6:7");
    const std::vector<test::GroupVoice> g = {
        {"B", 0, 0, -3.0, 4.9, 15.0, 0.14, false},
        {"T", 1, 1, +2.5, 5.5, 24.0, 0.12, false},
        {"A", 2, 2, -4.0, 5.2, 20.0, 0.12, false},
        {"S", 3, 3, +7.5, 5.8, 28.0, 0.12, false},
    };
    test::GroupTake take;
    audio::FakeAudioSystem sys{{audio::fake_device(0, "Fake quad duplex", 4, 2)}, {48000.0}};
    audio::Engine eng{with_rate(), &sys};
    audio::EnsembleSetup s{chord, test::players_of(g), {}};
    audio::DroneSettings d;

    static audio::EngineConfig with_rate() {
        audio::EngineConfig ec;
        ec.sample_rate_hz = 48000.0;
        return ec;
    }
    explicit QuadRig(double dur_s) {
        take.dur_s = dur_s;
        test::render_group(take, chord, 98.0, g);
        s.analysis.root_hz = 98.0;
        eng.set_ensemble(s);
        eng.open_input_device("quad");
        eng.open_output_device("quad");
        d.on = true;
        d.root_hz = 98.0;
        eng.set_drone(d);
        eng.start(false);
    }
};

TEST_CASE("the counting hooks see an allocation and a lock (so a zero below means something)") {
#ifdef BEATLESS_SANITIZED
    MESSAGE("skipped under the sanitizers, which interpose the allocator themselves");
#else
    pthread_mutex_t m = PTHREAD_MUTEX_INITIALIZER;
    const long a0 = g_allocs.load(), l0 = g_locks.load();
    t_watched = true;
    void* volatile p = std::malloc(100);
    auto* q = new std::vector<int>(10);
    pthread_mutex_lock(&m);
    pthread_mutex_unlock(&m);
    t_watched = false;
    std::free(p);
    delete q;
    CHECK(g_allocs.load() - a0 >= 2);
    CHECK(g_locks.load() - l0 == 1);
#endif
}

TEST_CASE("callbacks allocate nothing and take no lock; analysis allocates nothing per frame") {
#ifdef BEATLESS_SANITIZED
    MESSAGE("skipped under the sanitizers, which interpose the allocator themselves");
#else
    const double rate = 48000.0;
    test::LiveRig rig(rate, 256);
    std::vector<testsig::Note> notes(1);
    notes[0].start_s = 0.2;
    notes[0].end_s = 3.8;
    notes[0].centre_hz = 154.0;
    notes[0].vib_rate_hz = 5.5;
    notes[0].vib_depth_cents = 25.0;
    notes[0].level = 0.1;
    rig.voice.assign(static_cast<std::size_t>(4.0 * rate), 0.0f);
    testsig::add_voice(rig.voice, rate, notes, testsig::rolloff(12));
    pitch::ReadingConfig rc;
    rc.root_hz = 110.0;
    pitch::TargetSet set;
    for (const char* r : {"7/5", "10/7", "11/8", "3/2"}) set.targets.push_back({pitch::parse_interval(r), ""});
    audio::DroneSettings d;
    d.on = true;
    rig.open(rc, set, d, audio::RoomConfig{});

    std::vector<float> in(rig.block), out(2 * rig.block), spk(rig.block, 0.0f);
    long cb_allocs = 0, cb_locks = 0, an_allocs = 0, an_locks = 0;
    int changes = 0;
    for (std::size_t b = 0; (b + 1) * rig.block <= rig.voice.size(); ++b) {
        // Control changes between blocks: the callback applies them.
        if (b % 40 == 20) {
            audio::DroneSettings s = d;
            s.root_hz = (b / 40) % 2 ? 110.0 : 123.47;
            s.timbre = (b / 40) % 2 ? audio::Timbre::bright : audio::Timbre::hollow;
            s.fifth = (b / 80) % 2 == 1;
            s.octave = (b / 120) % 2 == 1;
            s.reference_hz = 154.0;
            s.reference_count = static_cast<std::uint32_t>(b);
            rig.engine.set_drone(s);
            ++changes;
        }
        std::copy_n(rig.voice.begin() + static_cast<std::ptrdiff_t>(b * rig.block), rig.block, in.begin());
        rig.room->process_add(spk, in);
        long a0 = g_allocs.load(), l0 = g_locks.load();
        t_watched = true;
        rig.sys.drive(in, out, 1, 2);  // capture and playback callbacks
        t_watched = false;
        cb_allocs += g_allocs.load() - a0;
        cb_locks += g_locks.load() - l0;
        for (std::size_t i = 0; i < rig.block; ++i) spk[i] = out[2 * i];
        const bool warm = b * rig.block > static_cast<std::size_t>(0.5 * rate);
        a0 = g_allocs.load();
        l0 = g_locks.load();
        t_watched = warm;
        rig.engine.analyze_available();
        t_watched = false;
        an_allocs += g_allocs.load() - a0;
        an_locks += g_locks.load() - l0;
    }
    CHECK(changes >= 15);
    CHECK(rig.engine.status().readings > 600);
    CHECK(cb_allocs == 0);
    CHECK(cb_locks == 0);
    CHECK(an_allocs == 0);
    CHECK(an_locks == 0);
#endif
}

TEST_CASE(
    "ensemble engine: the capture and playback callbacks allocate nothing and lock nothing; nor does the warm "
    "analysis") {
#ifdef BEATLESS_SANITIZED
    MESSAGE("skipped under the sanitizers, which interpose the allocator themselves");
#else
    // Four players with vibrato and crosstalk on a fake duplex device that
    // also plays the drone; drone changes between blocks; a chord change
    // while running (the analyzer is swapped, not rebuilt in the analysis).
    QuadRig q(3.0);
    auto& take = q.take;
    auto& s = q.s;
    auto& sys = q.sys;
    auto& eng = q.eng;
    auto& d = q.d;
    std::vector<float> out(2 * 256);
    std::vector<pitch::EnsembleReading> got(64);
    Counted counted;
    for (std::size_t f = 0, b = 0; (f + 256) * 4 <= take.interleaved.size(); f += 256, ++b) {
        if (b % 50 == 25) {
            audio::DroneSettings x = d;
            x.level_dbfs = (b / 50) % 2 ? -30.0 : -34.0;
            eng.set_drone(x);
        }
        if (b == 300) {
            audio::EnsembleSetup t = s;
            t.analysis.root_hz = 98.5;
            eng.set_ensemble(t);
        }
        counted.block([&] { sys.drive(std::span<const float>(take.interleaved.data() + f * 4, 256 * 4), out, 4, 2); },
                      [&] { eng.analyze_available(); }, f > 24000);
        while (eng.take_readings(got) > 0) {}
        eng.supervise();  // frees the retired analyzer on this (control) thread
    }
    CHECK(eng.status().readings > 500);
    counted.check();
#endif
}

TEST_CASE(
    "two voices: the callbacks and the warm analysis allocate nothing and lock nothing, targets swapped while "
    "running") {
#ifdef BEATLESS_SANITIZED
    MESSAGE("skipped under the sanitizers, which interpose the allocator themselves");
#else
    // A double stop (7/4 over G3) on a fake duplex device that also plays the drone.
    const double rate = 48000.0;
    std::vector<float> x(static_cast<std::size_t>(3.0 * rate), 0.0f);
    testsig::add_tone(x, rate, 196.0, 0.1, 2.9, 0.2, testsig::rolloff(12));
    testsig::add_tone(x, rate, 196.0 * 1.75, 0.1, 2.9, 0.16, testsig::rolloff(12));
    audio::FakeAudioSystem sys({audio::fake_device(0, "Fake duplex", 1, 2)}, {rate});
    audio::EngineConfig ec;
    ec.sample_rate_hz = rate;
    audio::Engine eng(ec, &sys);
    pitch::TargetSet set;
    for (const char* r : {"7/4", "7/5", "3/2"}) set.targets.push_back({pitch::parse_interval(r), ""});
    eng.set_two_voices(pitch::TwoVoiceConfig{}, set);
    eng.open_input_device("duplex");
    eng.open_output_device("duplex");
    audio::DroneSettings d;
    d.on = true;
    d.root_hz = 98.0;
    eng.set_drone(d);
    eng.start(false);
    std::vector<float> out(2 * 256);
    std::vector<pitch::TwoVoiceFrame> got(64);
    Counted counted;
    for (std::size_t f = 0, b = 0; f + 256 <= x.size(); f += 256, ++b) {
        if (b == 300) eng.set_two_voices(pitch::TwoVoiceConfig{}, set);  // swapped in by the analysis, built here
        counted.block([&] { sys.drive(std::span<const float>(x.data() + f, 256), out, 1, 2); },
                      [&] { eng.analyze_available(); }, f > 24000);
        while (eng.take_readings(std::span<pitch::TwoVoiceFrame>(got)) > 0) {}
        eng.supervise();  // frees the retired tracker on this (control) thread
    }
    CHECK(eng.status().readings > 200);
    counted.check();
#endif
}

TEST_CASE("recording on: the capture callback still allocates nothing and locks nothing; the take holds every frame") {
#ifdef BEATLESS_SANITIZED
    MESSAGE("skipped under the sanitizers, which interpose the allocator themselves");
#else
    // The group of four above, recorded (four channels) while the drone changes between blocks; the writer thread
    // drains the rings to FLAC meanwhile. The take read back is the input rounded to 24 bits (libsndfile reads
    // 24-bit PCM as code / 2^23; FLAC is lossless: libsndfile documentation).
    QuadRig q(2.0);
    auto& take = q.take;
    auto& sys = q.sys;
    auto& eng = q.eng;
    auto& d = q.d;
    test::TempDir dir;
    audio::TakeRecorderConfig rc;
    rc.sample_rate_hz = 48000.0;
    rc.channels = 4;
    rc.min_free_start_bytes = 0;
    rc.min_free_run_bytes = 0;
    audio::TakeRecorder rec(rc, dir.file("group.flac"), "group.flac");
    rec.start();
    eng.set_tap(&rec);
    std::vector<float> out(2 * 256);
    std::vector<pitch::EnsembleReading> got(64);
    Counted counted;
    std::size_t frames = 0;
    for (std::size_t f = 0, b = 0; (f + 256) * 4 <= take.interleaved.size(); f += 256, ++b) {
        if (b % 50 == 25) {
            audio::DroneSettings x = d;
            x.on = (b / 50) % 2 == 0;
            eng.set_drone(x);
        }
        counted.block([&] { sys.drive(std::span<const float>(take.interleaved.data() + f * 4, 256 * 4), out, 4, 2); },
                      [&] { eng.analyze_available(); }, f > 24000);
        while (eng.take_readings(got) > 0) {}
        eng.supervise();
        frames += 256;
    }
    eng.set_tap(nullptr);
    rec.stop();
    counted.check();
    CHECK(rec.problem() == "");
    CHECK(rec.written_frames() == static_cast<std::int64_t>(frames));
    CHECK(rec.drone_changes().size() >= 7);  // the state at the start and each change
    audio::SoundReader r(dir.file("group.flac"));
    REQUIRE(r.info().channels == 4);
    std::size_t same = 0, n = 0;
    for (auto blk = r.read_frames(); !blk.empty(); blk = r.read_frames())
        for (float v : blk) {
            const double c = std::clamp(std::round(take.interleaved[n] * 8388608.0), -8388608.0, 8388607.0);
            same += v == static_cast<float>(c / 8388608.0);
            ++n;
        }
    CHECK(n == frames * 4);
    CHECK(same == n);
#endif
}

TEST_CASE("the demo violinist: her rendering, the capture and the warm two-voice analysis allocate and lock nothing") {
#ifdef BEATLESS_SANITIZED
    MESSAGE("skipped under the sanitizers, which interpose the allocator themselves");
#else
    audio::DemoDuo duo(audio::DemoDuoConfig{});
    std::vector<float> block(256);
    audio::EngineConfig ec;
    ec.sample_rate_hz = 48000.0;
    audio::Engine eng(ec, nullptr);
    pitch::TargetSet set;
    for (const char* r : {"6/5", "5/4", "7/5", "3/2", "5/3", "7/4"})
        set.targets.push_back({pitch::parse_interval(r), ""});
    eng.set_two_voices(pitch::TwoVoiceConfig{}, set);
    eng.use_demo(audio::DemoDuoConfig{});
    eng.start(false);
    std::vector<pitch::TwoVoiceFrame> got(64);
    Counted counted;
    std::size_t frames = 0;
    for (int b = 0; b < 1200; ++b) {  // 6.4 s: two double stops and the lift between them
        counted.block([&] { duo.render(block); }, [&] { eng.run_demo_frames(256); }, b > 100);
        for (std::size_t k; (k = eng.take_readings(std::span<pitch::TwoVoiceFrame>(got))) > 0;) frames += k;
    }
    CHECK(frames > 500);
    counted.check();
#endif
}

TEST_CASE(
    "a take's note played back: the output is the take's samples times one gain once faded in; no click; the "
    "callbacks allocate and lock nothing while it plays") {
#ifdef BEATLESS_SANITIZED
    MESSAGE("skipped under the sanitizers, which interpose the allocator themselves");
#else
    // The take: a voice at 7/5 over A2 with vibrato, written as 24-bit FLAC and read back (what the Review screen
    // reads). Played through the engine's clip player on the fake duplex device, drone on: the clip hushes the drone
    // (raised-cosine crossfade, 30 ms), so once faded in the output is exactly the take's sample times the drone's
    // level as a gain (10^(-30/20)), delayed by the limiter's look-ahead (1.5 ms, audio/drone.cpp), which does not
    // act at this level (its gain stays 1). Clicks: no step between output samples larger than the largest step of
    // the drone or of the scaled take (common practice: a click is a discontinuity).
    const double rate = 48000.0;
    test::TempDir dir;
    std::vector<float> voice(static_cast<std::size_t>(1.2 * rate), 0.0f);
    std::vector<testsig::Note> notes(1);
    notes[0].start_s = 0.1;
    notes[0].end_s = 1.1;
    notes[0].centre_hz = 154.0;
    notes[0].vib_rate_hz = 5.5;
    notes[0].vib_depth_cents = 25.0;
    notes[0].level = 0.2;
    testsig::add_voice(voice, rate, notes, testsig::rolloff(8));
    {
        audio::TakeWriter w(dir.file("take.flac"), rate, 1);
        w.write(voice);
        w.close();
    }
    double take_rate = 0.0;
    const std::vector<float> take = audio::SoundReader::read_all(dir.file("take.flac"), -1, &take_rate);
    REQUIRE(take_rate == rate);
    REQUIRE(take.size() == voice.size());

    test::LiveRig rig(rate, 256);
    audio::DroneSettings d;
    d.on = true;
    d.root_hz = 110.0;
    audio::RoomConfig room;
    room.gain = 0.0;
    rig.open_7_5_over_a2(d, room);
    std::vector<float> in(256, 0.0f), out(2 * 256), played;
    Counted counted;
    auto run = [&](std::size_t blocks) {
        for (std::size_t b = 0; b < blocks; ++b) {
            counted.block([&] { rig.sys.drive(in, out, 1, 2); }, [&] { rig.engine.analyze_available(); }, true);
            for (std::size_t i = 0; i < 256; ++i) played.push_back(out[2 * i]);
        }
    };
    run(400);  // the drone has faded in and settled; the analysis is warm
    const std::size_t before = played.size();
    REQUIRE(rig.engine.play_clip(take, take_rate, true));
    CHECK(rig.engine.clip_playing());
    run(static_cast<std::size_t>(std::ceil((1.3 * rate) / 256.0)));
    rig.engine.supervise();  // frees the finished clip (control thread)
    CHECK(!rig.engine.clip_playing());
    counted.check();

    const std::size_t look = 72;    // lround(0.0015 * 48000), the limiter's look-ahead
    const std::size_t fade = 1440;  // 30 ms
    const auto g = static_cast<float>(std::pow(10.0, -30.0 / 20.0));
    std::size_t same = 0, n = 0;
    for (std::size_t k = fade; k + fade < take.size(); ++k, ++n) same += played[before + look + k] == take[k] * g;
    CHECK(n > 50000);
    CHECK(same == n);
    float step_max = 0.0f, drone_step = 0.0f, take_step = 0.0f;
    for (std::size_t i = before + 1; i < played.size(); ++i)
        step_max = std::max(step_max, std::fabs(played[i] - played[i - 1]));
    for (std::size_t i = 1000; i < before; ++i) drone_step = std::max(drone_step, std::fabs(played[i] - played[i - 1]));
    for (std::size_t k = 1; k < take.size(); ++k) take_step = std::max(take_step, std::fabs(take[k] - take[k - 1]) * g);
    CHECK(step_max <= 1.05f * std::max(drone_step, take_step));
    // After the clip, the drone is back at its level.
    double e_before = 0.0, e_after = 0.0;
    for (std::size_t i = before - 9600; i < before; ++i) e_before += played[i] * played[i];
    for (std::size_t i = played.size() - 4800; i < played.size(); ++i) e_after += played[i] * played[i];
    CHECK(std::sqrt(e_after / 4800) == doctest::Approx(std::sqrt(e_before / 9600)).epsilon(0.05));
#endif
}
