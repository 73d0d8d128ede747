// Recording takes: from the fake device, the demo performer and a file, the take reopens bit for bit with its
// context; a recorder killed with SIGKILL loses at most the last second and the take is recovered on the next start;
// a full disk (a file-size limit, or a free-space margin) stops the recording with one line and a readable take.
//
// Sources: FLAC is lossless (libsndfile documentation, "Supported formats": FLAC, lossless) and libsndfile reads
// 24-bit PCM as code / 2^23 (libsndfile FAQ Q10/Q12 on integer full scale), so the take read back must equal the
// input rounded to 24 bits exactly; a 24-bit WAV input must come back unchanged. SIGKILL cannot be caught (POSIX.1-2017,
// signal.h); write(2) fails with EFBIG past RLIMIT_FSIZE when SIGXFSZ is ignored (POSIX.1-2017, setrlimit); statvfs
// f_bavail is the space an unprivileged writer may use (POSIX.1-2017, sys/statvfs.h).
#include "audio/demo_performer.h"
#include "audio/soundfile.h"
#include "audio/take_recorder.h"
#include "pitch/base/error.h"
#include "pitch/theory/interval.h"
#include "tests/cli.h"
#include "tests/live_rig.h"
#include "ui/session/app_state.h"
#include "ui/session/settings.h"
#include "ui/session/take_file.h"
#include "ui/session/take_recording.h"
#include "ui/session/target_files.h"

#include <doctest/doctest.h>

#include <fcntl.h>
#include <signal.h>
#include <sys/resource.h>
#include <sys/time.h>
#include <sys/wait.h>
#include <unistd.h>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <string>
#include <thread>
#include <vector>

using beatless::Error;
using beatless::test::run_program;
using beatless::test::TempDir;
namespace fs = std::filesystem;
namespace ui = beatless::ui;
namespace audio = beatless::audio;
namespace pitch = beatless::pitch;

namespace {

// x rounded to a 24-bit code and read back as libsndfile does: round(x * 2^23) clipped, / 2^23.
float as_24_bit(float x) {
    const double c = std::clamp(std::round(static_cast<double>(x) * 8388608.0), -8388608.0, 8388607.0);
    return static_cast<float>(c / 8388608.0);
}

std::vector<float> read_interleaved(const std::string& path, int* channels = nullptr) {
    audio::SoundReader r(path);
    if (channels) *channels = r.info().channels;
    std::vector<float> out;
    for (auto b = r.read_frames(); !b.empty(); b = r.read_frames()) out.insert(out.end(), b.begin(), b.end());
    return out;
}

// Index of the first sample where a and b differ (size of the shorter when one is a prefix of the other).
std::size_t first_difference(const std::vector<float>& a, const std::vector<float>& b) {
    const std::size_t n = std::min(a.size(), b.size());
    for (std::size_t i = 0; i < n; ++i)
        if (a[i] != b[i]) return i;
    return n;
}

ui::TakeContext context(const std::string& screen) {
    ui::TakeContext c;
    c.device = "Fake duplex";
    c.screen = screen;
    c.root = "A2";
    c.a4_hz = 442.0;
    c.targets = "7-limit";
    c.target = "7/5";
    return c;
}

// Dates a file a minute back: recover_takes() leaves a take written in the last seconds alone.
void make_old(const fs::path& p) {
    struct timeval tv[2] = {{std::time(nullptr) - 60, 0}, {std::time(nullptr) - 60, 0}};
    REQUIRE(::utimes(p.c_str(), tv) == 0);
}

// A running `beatless` child: one of its outputs (fd 1 or 2) on a pipe, the other to /dev/null; an environment
// variable and a file-size limit (bytes; 0 = none) of its own.
struct Child {
    pid_t pid = -1;
    int fd = -1;  // the read end of the pipe
    Child(const std::vector<std::string>& args, int watched_fd, const std::string& env = {}, rlim_t fsize = 0) {
        int p[2];
        REQUIRE(::pipe(p) == 0);
        pid = ::fork();
        REQUIRE(pid >= 0);
        if (pid == 0) {
            ::dup2(p[1], watched_fd);
            ::close(p[0]);
            ::dup2(::open("/dev/null", O_WRONLY), watched_fd == 1 ? 2 : 1);
            if (!env.empty()) ::putenv(const_cast<char*>(env.c_str()));
            if (fsize > 0) {
                struct rlimit lim {
                    fsize, fsize
                };
                ::setrlimit(RLIMIT_FSIZE, &lim);
            }
            const std::string prog = beatless::test::program_path();
            std::vector<char*> argv{const_cast<char*>(prog.c_str())};
            for (const auto& a : args) argv.push_back(const_cast<char*>(a.c_str()));
            argv.push_back(nullptr);
            ::execv(prog.c_str(), argv.data());
            ::_exit(127);
        }
        ::close(p[1]);
        fd = p[0];
    }
    int wait() {  // the wait status
        int status = 0;
        ::waitpid(pid, &status, 0);
        return status;
    }
};

}  // namespace

TEST_CASE("a take from the fake device reopens bit for bit (the input rounded to 24 bits) with its context") {
    TempDir d;
    const double rate = 48000.0;
    beatless::test::LiveRig rig(rate, 256);
    rig.voice.resize(static_cast<std::size_t>(2.0 * rate));
    for (std::size_t i = 0; i < rig.voice.size(); ++i)
        rig.voice[i] = static_cast<float>(0.2 * std::sin(2 * M_PI * 154.0 * static_cast<double>(i) / rate));
    audio::DroneSettings drone;
    drone.on = true;
    drone.timbre = audio::Timbre::bright;
    rig.open_7_5_over_a2(drone);

    const fs::path path = d.file("fake.flac");
    ui::TakeRecording take(rig.engine, path, context("practice"), rate, 1);
    // The microphone: the voice plus the loudspeakers through the room, exactly what the callback is handed.
    std::vector<float> in(rig.block), out(2 * rig.block), spk(rig.block, 0.0f), heard;
    for (std::size_t b = 0; (b + 1) * rig.block <= rig.voice.size(); ++b) {
        if (b == 200) {
            audio::DroneSettings s = drone;
            s.root_hz = 98.0;
            rig.engine.set_drone(s);
        }
        std::copy_n(rig.voice.begin() + static_cast<std::ptrdiff_t>(b * rig.block), rig.block, in.begin());
        rig.room->process_add(spk, in);
        heard.insert(heard.end(), in.begin(), in.end());
        rig.sys.drive(in, out, 1, 2);
        for (std::size_t i = 0; i < rig.block; ++i) spk[i] = out[2 * i];
        rig.engine.analyze_available();
    }
    const std::string said = take.stop();
    CHECK(said == "recorded 2 s to " + path.string());

    const std::vector<float> back = read_interleaved(path.string());
    REQUIRE(back.size() == heard.size());
    std::vector<float> want(heard.size());
    std::transform(heard.begin(), heard.end(), want.begin(), as_24_bit);
    CHECK(first_difference(back, want) == want.size());

    const ui::TakeInfo info = ui::read_take_sidecar(ui::take_sidecar_path(path));
    CHECK(info.complete);
    CHECK(info.rate_hz == rate);
    CHECK(info.channels == 1);
    CHECK(info.screen == "practice");
    CHECK(info.root == "A2");
    CHECK(info.root_hz == 110.0);
    CHECK(info.a4_hz == 442.0);
    CHECK(info.target == "7/5");
    CHECK(info.device == "Fake duplex");
    REQUIRE(info.duration_s);
    CHECK(*info.duration_s == doctest::Approx(2.0).epsilon(1e-9));
    CHECK(info.drone.on);
    CHECK(info.drone.timbre == audio::Timbre::bright);
    REQUIRE(info.drone.events.size() == 1);
    CHECK(info.drone.events[0].what == ui::DroneEventKind::root);
    CHECK(info.drone.events[0].root_hz == 98.0);
    CHECK(std::abs(info.drone.events[0].t_s - 200.0 * 256.0 / rate) <= 0.5e-6);  // written with 6 decimals
}

TEST_CASE("a take from the demo performer reopens bit for bit: what the performer sang, rounded to 24 bits") {
    TempDir d;
    audio::DemoConfig dc;
    dc.root_hz = 110.0;
    dc.seed = 11;
    dc.target_cents = {582.512, 617.488, 701.955};
    audio::EngineConfig ec;
    ec.block_len_frames = 256;
    audio::Engine engine(ec, nullptr);
    engine.use_demo(dc);
    pitch::ReadingConfig rc;
    rc.root_hz = 110.0;
    pitch::TargetSet set;
    set.targets.push_back({pitch::parse_interval("7/5"), ""});
    engine.set_readings(rc, set);
    const fs::path path = d.file("demo.flac");
    ui::TakeRecording take(engine, path, context("practice"), dc.sample_rate_hz, 1);
    engine.start(false);
    engine.run_demo_frames(static_cast<std::size_t>(3.0 * dc.sample_rate_hz));
    take.stop();

    // The same performer, rendered on her own in the same blocks.
    audio::DemoPerformer singer(dc);
    std::vector<float> sung(static_cast<std::size_t>(3.0 * dc.sample_rate_hz));
    for (std::size_t at = 0; at < sung.size(); at += 256)
        singer.render(std::span<float>(sung.data() + at, std::min<std::size_t>(256, sung.size() - at)));
    std::transform(sung.begin(), sung.end(), sung.begin(), as_24_bit);
    const std::vector<float> back = read_interleaved(path.string());
    REQUIRE(back.size() == sung.size());
    CHECK(first_difference(back, sung) == sung.size());
    CHECK(ui::read_take_sidecar(ui::take_sidecar_path(path)).complete);
}

TEST_CASE("listen --input-file --record: a 24-bit WAV comes back unchanged, the file's flushing silence is not kept") {
    TempDir d;
    const std::string wav = d.file("in.wav");
    // 6 s: longer than the recorder's 4 s rings, so the file run as fast as possible must wait for the writer.
    REQUIRE(run_program("tone --root D3 --ratio 7/4 --seconds 6 --out " + wav).exit_code == 0);
    const std::string flac = d.file("take.flac");
    const auto r = run_program("listen --input-file " + wav + " --fast --record " + flac + " --targets tritones");
    CHECK(r.exit_code == 0);
    CHECK(r.err.find("beatless: recorded 6 s to " + flac + "\n") != std::string::npos);
    const std::vector<float> in = read_interleaved(wav), back = read_interleaved(flac);
    REQUIRE(back.size() == in.size());
    CHECK(first_difference(back, in) == in.size());
    const ui::TakeInfo info = ui::read_take_sidecar(d.file("take.toml"));
    CHECK(info.device == "file " + wav);
    CHECK(info.targets == "tritones");
    CHECK(info.root == "A2");
    CHECK(info.complete);

    // The same in real time, into a folder: a date-and-time name.
    const std::time_t before = std::time(nullptr);
    const auto rt = run_program("listen --input-file " + wav + " --record " + d.path() + " --seconds 1");
    const std::time_t after = std::time(nullptr);
    CHECK(rt.exit_code == 0);
    const auto takes = ui::list_takes(d.path());
    REQUIRE(takes.size() == 2);  // take.flac and the new one
    const std::string named = takes[0].audio_path.filename() == "take.flac" ? takes[1].audio_path.filename().string()
                                                                            : takes[0].audio_path.filename().string();
    bool dated = false;  // yyyy-mm-dd_hhmmss of a second while it ran
    for (std::time_t t = before; t <= after; ++t) dated = dated || named == ui::take_stem(t) + ".flac";
    CHECK_MESSAGE(dated, named);
}

TEST_CASE("listen --record refuses a bad name in one line, before anything is recorded") {
    TempDir d;
    const std::string wav = d.file("in.wav");
    REQUIRE(run_program("tone --root A2 --seconds 0.5 --out " + wav).exit_code == 0);
    auto err = [&](const std::string& to) {
        const auto r = run_program("listen --input-file " + wav + " --fast --record " + to);
        CHECK(r.exit_code == 1);
        CHECK(beatless::test::line_count(r.err) == 1);
        return r.err;
    };
    CHECK(err(d.file("x.wav")) ==
          "beatless: --record '" + d.file("x.wav") + "': a take is written as FLAC; name it .flac\n");
    CHECK(err(d.file("no/x.flac")) ==
          "beatless: " + d.file("no/x.flac") + ": the folder " + d.file("no") + " does not exist (create it first)\n");
    std::ofstream(d.file("old.flac")) << "x";
    CHECK(err(d.file("old.flac")) ==
          "beatless: " + d.file("old.flac") + ": already exists; a take never replaces a file\n");
    fs::create_symlink("/dev/null", d.file("dev.flac"));  // a device behind a take's name: never written
    CHECK(err(d.file("dev.flac")) ==
          "beatless: " + d.file("dev.flac") + ": already exists; a take never replaces a file\n");
}

TEST_CASE("a recorder killed with SIGKILL loses at most the last second; the next start recovers the take") {
    TempDir d;
    const std::string home = d.file("home");
    Child child({"listen", "--demo", "--seed", "5", "--record"}, 1, "BEATLESS_HOME=" + home);
    // Reads the readings (one JSON line each) for 3 s of wall time, keeping the newest time heard.
    FILE* f = ::fdopen(child.fd, "r");
    double newest_t = 0.0;
    const auto until = std::chrono::steady_clock::now() + std::chrono::milliseconds(3000);
    char line[4096];
    while (std::chrono::steady_clock::now() < until && std::fgets(line, sizeof line, f)) {
        double t = 0.0;
        if (std::sscanf(line, "{\"t\": %lf", &t) == 1 || std::sscanf(line, "{\"t\":%lf", &t) == 1) newest_t = t;
    }
    ::kill(child.pid, SIGKILL);
    const int status = child.wait();
    std::fclose(f);
    CHECK(WIFSIGNALED(status));
    REQUIRE(newest_t > 1.5);

    const fs::path dir = fs::path(home) / "data" / "takes";
    std::vector<ui::TakeInfo> takes = ui::list_takes(dir);
    REQUIRE(takes.size() == 1);
    CHECK_FALSE(takes[0].complete);
    const fs::path flac = takes[0].audio_path;
    // What a killed recorder left: readable up to its last synced block.
    const std::vector<float> cut = read_interleaved(flac.string());
    const double cut_s = static_cast<double>(cut.size()) / 48000.0;
    CHECK(audio::SoundReader(flac.string()).info().len_frames == static_cast<std::int64_t>(cut.size()));
    CHECK(cut_s >= newest_t - 1.0);

    // The next start recovers it (once it is a few seconds old: a live recorder could still be writing it).
    make_old(flac);
    const auto again = run_program("listen --demo --seconds 0.3 --record", {"BEATLESS_HOME=" + home});
    CHECK(again.exit_code == 0);
    CHECK(again.err.find("beatless: recovered a take cut short: " + flac.string() + " (") != std::string::npos);
    const ui::TakeInfo fixed = ui::read_take_sidecar(ui::take_sidecar_path(flac));
    CHECK(fixed.complete);
    REQUIRE(fixed.duration_s);
    const std::vector<float> whole = read_interleaved(flac.string());
    CHECK(whole.size() == cut.size());
    CHECK(*fixed.duration_s == doctest::Approx(cut_s).epsilon(1e-6));
    CHECK(first_difference(whole, cut) == cut.size());
    // And it is what the demo performer sang (seed 5, the 7-limit set), rounded to 24 bits.
    audio::DemoConfig dc;
    dc.root_hz = 110.0;
    dc.seed = 5;
    for (const auto& t : ui::load_target_set("7-limit").targets) dc.target_cents.push_back(t.interval.cents());
    audio::DemoPerformer singer(dc);
    std::vector<float> sung(whole.size());
    for (std::size_t at = 0; at < sung.size(); at += 256)
        singer.render(std::span<float>(sung.data() + at, std::min<std::size_t>(256, sung.size() - at)));
    std::transform(sung.begin(), sung.end(), sung.begin(), as_24_bit);
    CHECK(first_difference(whole, sung) == sung.size());
}

TEST_CASE("a full disk stops the recording with one line and leaves a readable take") {
    TempDir d;
    const std::string wav = d.file("in.wav");
    REQUIRE(run_program("tone --root A2 --ratio 3/2 --seconds 8 --out " + wav).exit_code == 0);
    // A file-size limit of 256 kB (ulimit -f 256): the take's FLAC cannot grow past it.
    const std::string flac = d.file("full.flac");
    Child child({"listen", "--input-file", wav, "--fast", "--record", flac}, 2, {}, 256 * 1024);
    std::string err;
    char buf[4096];
    for (ssize_t n; (n = ::read(child.fd, buf, sizeof buf)) > 0;) err.append(buf, static_cast<std::size_t>(n));
    ::close(child.fd);
    const int status = child.wait();
    REQUIRE(WIFEXITED(status));
    CHECK(WEXITSTATUS(status) == 0);  // the listening went on; the recording stopped
    INFO(err);
    const std::size_t at = err.find("beatless: " + flac + ": write failed (File too large)");
    REQUIRE(at != std::string::npos);
    const std::string said = err.substr(at, err.find('\n', at) - at);
    CHECK(said.find("; recording stopped at ") != std::string::npos);
    CHECK(said.ends_with(" s, what was recorded is kept"));
    CHECK(fs::file_size(flac) <= 256u * 1024u);
    const std::vector<float> back = read_interleaved(flac);
    CHECK(back.size() > 48000u);
    const std::vector<float> in = read_interleaved(wav);
    CHECK(first_difference(back, in) == back.size());  // a prefix of the input, bit for bit
    // Its header could not be finished: unfinished (no duration) until a later start recovers it.
    const ui::TakeInfo cut = ui::read_take_sidecar(d.file("full.toml"));
    CHECK_FALSE(cut.complete);
    CHECK_FALSE(cut.duration_s);
    make_old(flac);
    const auto rec = ui::recover_takes(d.path());
    REQUIRE(rec.size() == 1);
    CHECK(rec[0].frames == static_cast<std::int64_t>(back.size()));
    const ui::TakeInfo fixed = ui::read_take_sidecar(d.file("full.toml"));
    CHECK(fixed.complete);
    REQUIRE(fixed.duration_s);
    CHECK(*fixed.duration_s == doctest::Approx(static_cast<double>(back.size()) / 48000.0).epsilon(1e-6));
}

TEST_CASE("free space: refused below the start margin, stopped cleanly below the running margin") {
    TempDir d;
    audio::DemoConfig dc;
    dc.target_cents = {582.512};
    audio::Engine engine({}, nullptr);
    engine.use_demo(dc);
    pitch::ReadingConfig rc;
    rc.root_hz = 110.0;
    pitch::TargetSet set;
    set.targets.push_back({pitch::parse_interval("7/5"), ""});
    engine.set_readings(rc, set);
    const std::uint64_t free = audio::free_bytes_near(d.file("x.flac"));
    REQUIRE(free < UINT64_MAX);
    audio::TakeRecorderConfig greedy;
    greedy.min_free_start_bytes = free + (1ull << 40);  // a terabyte more than there is
    try {
        ui::TakeRecording t(engine, d.file("x.flac"), context("practice"), 48000.0, 1, greedy);
        FAIL("no refusal");
    } catch (const Error& e) {
        const std::string m = e.what();
        CHECK(m.starts_with(d.file("x.flac") + ": only "));
        CHECK(m.ends_with(" MB free on its disk (recording needs at least " +
                          std::to_string(std::llround(static_cast<double>(free + (1ull << 40)) / (1 << 20))) + " MB)"));
    }
    CHECK_FALSE(fs::exists(d.file("x.flac")));

    audio::TakeRecorderConfig tight;
    tight.min_free_start_bytes = 0;
    tight.min_free_run_bytes = free + (1ull << 40);  // "nearly full" at the first sync
    ui::TakeRecording t(engine, d.file("y.flac"), context("practice"), 48000.0, 1, tight);
    engine.start(false);
    for (int i = 0; i < 100 && !t.stopped_early(); ++i) {
        engine.run_demo_frames(4800);
        std::this_thread::sleep_for(std::chrono::milliseconds(20));
    }
    REQUIRE(t.stopped_early());
    const std::string said = t.stop();
    CHECK(said.starts_with(d.file("y.flac") + ": only "));
    CHECK(said.ends_with(" s, what was recorded is kept"));
    CHECK(read_interleaved(d.file("y.flac")).size() >= 48000u);
    CHECK(ui::read_take_sidecar(d.file("y.toml")).complete);
}

TEST_CASE(
    "a drone already sounding when the take began: its phases are kept, and the drone regenerated from the "
    "sidecar is the one that played, sample for sample") {
    // The drone sounds for 1 s before the take (its fade in long done), then 1 s is recorded; what the playback
    // callback played from the take's first block on is compared with regenerate_drone's rendering. Both are the
    // same synthesis (audio/drone.h) with the same look-ahead limiter, whose delay line starts empty in the
    // regenerated one: its first 1.5 ms (72 samples at 48 kHz) are compared from there on.
    TempDir d;
    const double rate = 48000.0;
    beatless::test::LiveRig rig(rate, 256);
    audio::DroneSettings drone;
    drone.on = true;
    drone.fifth = true;
    drone.timbre = audio::Timbre::bright;
    audio::RoomConfig room;
    room.gain = 0.0;
    rig.open_7_5_over_a2(drone, room);
    std::vector<float> in(rig.block, 0.0f), out(2 * rig.block), played;
    auto run = [&](std::size_t blocks, bool keep) {
        for (std::size_t b = 0; b < blocks; ++b) {
            rig.sys.drive(in, out, 1, 2);
            rig.engine.analyze_available();
            if (keep)
                for (std::size_t i = 0; i < rig.block; ++i) played.push_back(out[2 * i]);
        }
    };
    run(188, false);  // ~1 s
    const fs::path path = d.file("sounding.flac");
    ui::TakeRecording take(rig.engine, path, context("practice"), rate, 1);
    run(188, true);
    CHECK(take.stop().rfind("recorded", 0) == 0);
    const ui::TakeInfo info = ui::read_take_sidecar(ui::take_sidecar_path(path));
    REQUIRE(info.drone.phases);
    const std::vector<float> regen = ui::regenerate_drone(info, static_cast<std::int64_t>(played.size()));
    REQUIRE(regen.size() == played.size());
    double worst = 0.0, peak = 0.0;
    for (std::size_t i = 72; i < played.size(); ++i) {
        worst = std::max(worst, static_cast<double>(std::fabs(regen[i] - played[i])));
        peak = std::max(peak, static_cast<double>(std::fabs(played[i])));
    }
    CHECK(peak > 0.01);
    CHECK(worst < 1e-4 * peak);  // the phases written with 12 decimals
    // Without the phases (an older take), it fades in from phase 0 instead: far from what played.
    ui::TakeInfo older = info;
    older.drone.phases.reset();
    const std::vector<float> faded = ui::regenerate_drone(older, static_cast<std::int64_t>(played.size()));
    double off = 0.0;
    for (std::size_t i = 72; i < played.size(); ++i)
        off = std::max(off, static_cast<double>(std::fabs(faded[i] - played[i])));
    CHECK(off > 0.1 * peak);
}

TEST_CASE(
    "a drill begun from the screen (not --drill) names itself in the take's sidecar, whether the take began "
    "before it or after") {
    TempDir home;
    setenv("BEATLESS_HOME", home.path().c_str(), 1);
    ui::AppOptions o;
    o.simulated = true;
    o.demo = true;
    o.save_settings = false;
    ui::Settings s;
    s.caution_acknowledged = true;
    ui::AppState app(s, fs::path(home.path()) / "never.toml", o);
    app.start();
    audio::DroneSettings drone;
    drone.on = true;
    drone.root_hz = 110.0;
    auto record = [&](auto during) {
        app.start_recording();
        REQUIRE(app.recording());
        const std::string name = app.recording_name();
        for (int i = 0; i < 30; ++i) app.update(1.0 / 60.0);
        during();
        for (int i = 0; i < 30; ++i) app.update(1.0 / 60.0);
        app.stop_recording();
        return ui::read_take_sidecar(ui::takes_dir() / (name + ".toml"));
    };
    // Begun while a take records: the take is of the drill from there (its sidecar is rewritten at the end).
    const ui::TakeInfo first = record([&] { REQUIRE(app.begin_drill(drone, "hold-tritones")); });
    CHECK(first.drill == "hold-tritones");
    // A take begun while the drill runs.
    const ui::TakeInfo second = record([] {});
    CHECK(second.drill == "hold-tritones");
    app.end_drill();
    app.shutdown();
    unsetenv("BEATLESS_HOME");
}
