// Take files: the sidecar written and read back, checked by an outside TOML parser; names by local time; the listing
// newest first; the FLAC kept bit for bit; a take cut short recovered.
//
// Sources: the sidecar must parse with Python's tomllib (/usr/bin/python3, the TOML 1.0 parser of the standard
// library) to the same values; ISO 8601 local time with offset is checked with Python's datetime.fromisoformat and
// timestamp(); FLAC is lossless (libsndfile documentation: "FLAC" is a lossless format) and libsndfile reads 24-bit
// PCM as code / 2^23 (libsndfile FAQ, "reading a 16 bit file as float": integer full scale maps to [-1.0, 1.0));
// a FLAC stream whose STREAMINFO total is 0 has "unknown" length and decodes to its last whole frame (FLAC format
// specification, xiph.org, METADATA_BLOCK_STREAMINFO: "0 means unknown").
#include "audio/soundfile.h"
#include "audio/take_writer.h"
#include "pitch/base/error.h"
#include "tests/cli.h"
#include "ui/session/take_file.h"

#include <doctest/doctest.h>

#include <sys/time.h>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

using beatless::Error;
using beatless::test::TempDir;
namespace fs = std::filesystem;
namespace ui = beatless::ui;
namespace audio = beatless::audio;

namespace {

ui::TakeInfo sample_take(const fs::path& dir, const std::string& stem) {
    ui::TakeInfo t;
    t.audio_path = dir / (stem + ".flac");
    t.sidecar_path = ui::take_sidecar_path(t.audio_path);
    t.started = "2026-12-03T16:15:02+01:00";
    t.rate_hz = 48000;
    t.channels = 2;
    t.device = "Studio \"B\" \\ mic\tin";  // a quote, a backslash and a tab to escape
    t.screen = "ensemble";
    t.root_hz = 65.406391;
    t.root = "C2";
    t.a4_hz = 442;
    t.targets = "/home/mira/sets/septimal.toml";
    t.target = "7/4";
    t.drill = "hold-the-seventh";
    t.players = {{1, "Mira", 1}, {2, "Jonas", 3}};
    t.drone.on = true;
    t.drone.timbre = audio::Timbre::hollow;
    t.drone.level_dbfs = -27.5;
    t.drone.fifth = true;
    t.drone.events = {{1.25, ui::DroneEventKind::off, 65.406391},
                      {3.5, ui::DroneEventKind::root, 73.416192},
                      {3.5, ui::DroneEventKind::on, 73.416192}};
    t.duration_s = 12.345678;
    t.complete = true;
    return t;
}

void age_file(const fs::path& p, int seconds) {
    struct timeval tv[2];
    tv[0].tv_sec = tv[1].tv_sec = std::time(nullptr) - seconds;
    tv[0].tv_usec = tv[1].tv_usec = 0;
    REQUIRE(::utimes(p.c_str(), tv) == 0);
}

}  // namespace

TEST_CASE("a sidecar reads back as written, and Python's tomllib reads the same values") {
    TempDir d;
    const ui::TakeInfo t = sample_take(d.path(), "2026-12-03_161502");
    ui::write_take_sidecar(t);
    const ui::TakeInfo r = ui::read_take_sidecar(t.sidecar_path);
    CHECK(r.audio_path == t.audio_path);
    CHECK(r.started == t.started);
    CHECK(r.rate_hz == 48000);
    CHECK(r.channels == 2);
    CHECK(r.device == "Studio \"B\" \\ mic\\x09in");  // read through pitch::printable: the tab as \x09
    CHECK(r.screen == "ensemble");
    CHECK(r.root_hz == doctest::Approx(65.406391).epsilon(1e-12));
    CHECK(r.root == "C2");
    CHECK(r.a4_hz == 442);
    CHECK(r.targets == t.targets);
    CHECK(r.target == "7/4");
    CHECK(r.drill == "hold-the-seventh");
    REQUIRE(r.players.size() == 2);
    CHECK(r.players[1].channel == 2);
    CHECK(r.players[1].name == "Jonas");
    CHECK(r.players[1].voice == 3);
    CHECK(r.drone.on);
    CHECK(r.drone.timbre == audio::Timbre::hollow);
    CHECK(r.drone.level_dbfs == -27.5);
    CHECK(r.drone.fifth);
    CHECK_FALSE(r.drone.octave);
    REQUIRE(r.drone.events.size() == 3);
    CHECK(r.drone.events[1].what == ui::DroneEventKind::root);
    CHECK(r.drone.events[1].root_hz == doctest::Approx(73.416192).epsilon(1e-12));
    REQUIRE(r.duration_s);
    CHECK(*r.duration_s == doctest::Approx(12.345678).epsilon(1e-12));
    CHECK(r.complete);

    // The outside parser: every value as the program meant it.
    const std::string got =
        beatless::test::python_output("import tomllib\nd = tomllib.load(open('" + t.sidecar_path.string() +
                                      "', 'rb'))\n"
                                      "print(repr(d['device']), d['format'], d['channels'], d['players'][1]['name'],\n"
                                      "      d['drone']['events'][1]['what'], d['drone']['events'][1]['root_hz'],\n"
                                      "      d['complete'], d['targets'])\n");
    CHECK(got == "'Studio \"B\" \\\\ mic\\tin' 1 2 Jonas root 73.416192 True /home/mira/sets/septimal.toml");
}

TEST_CASE("a take cut short has complete = false and no duration") {
    TempDir d;
    ui::TakeInfo t = sample_take(d.path(), "cut");
    t.duration_s.reset();
    t.complete = false;
    t.players.clear();
    t.drone.events.clear();
    const std::string text = ui::take_sidecar_text(t);
    CHECK(text.find("duration_s") == std::string::npos);
    const ui::TakeInfo r = ui::parse_take_sidecar(text, "cut.toml");
    CHECK_FALSE(r.complete);
    CHECK_FALSE(r.duration_s);
    CHECK(r.drone.events.empty());
}

TEST_CASE("a bad sidecar is one line naming the file, the line and the key") {
    const std::string good = "kind = \"take\"\nformat = 1\nrate_hz = 48000\nchannels = 1\nroot_hz = 110\n";
    CHECK_NOTHROW(ui::parse_take_sidecar(good, "t.toml"));
    auto message = [](const std::string& text) {
        try {
            ui::parse_take_sidecar(text, "t.toml");
        } catch (const Error& e) {
            return std::string(e.what());
        }
        return std::string("no error");
    };
    CHECK(message(good + "rate_hx = 3\n") == "t.toml:6: `rate_hx`: unknown key; did you mean `rate_hz`?");
    CHECK(message("kind = \"take\"\nformat = 2\nrate_hz = 48000\nchannels = 1\nroot_hz = 110\n") ==
          "t.toml:2: `format`: 2 is newer than this program reads (1)");
    CHECK(message("kind = \"take\"\nformat = 1\nrate_hz = 4\nchannels = 1\nroot_hz = 110\n") ==
          "t.toml:3: `rate_hz`: 4 is out of range (8000 to 192000)");
    CHECK(message("kind = \"take\"\nformat = 1\nrate_hz = 48000\nchannels = 1\n") ==
          "t.toml:1: `root_hz`: required key missing");
    CHECK(message(good + "[drone]\nevents = [{ t_s = 2, what = \"up\", root_hz = 110 }]\n") ==
          "t.toml:7: `what`: 'up' is not on, off or root");
    CHECK(message(good + "[[players]]\nchannel = 2\nvoice = 1\n") == "t.toml:7: `channel`: 2 is out of range (1 to 1)");
}

TEST_CASE("take names follow the local date and time; ISO 8601 with the offset, as Python reads it") {
    const char* old_tz = std::getenv("TZ");
    const std::string saved = old_tz ? old_tz : "";
    ::setenv("TZ", "UTC-1", 1);  // POSIX TZ: one hour east of UTC
    ::tzset();
    const std::time_t when = 1796314502;
    const std::string iso = ui::iso8601_local(when);
    const std::string stem = ui::take_stem(when);
    if (old_tz)
        ::setenv("TZ", saved.c_str(), 1);
    else
        ::unsetenv("TZ");
    ::tzset();
    CHECK(iso.size() == 25);
    CHECK(iso.substr(19) == "+01:00");
    // Python's datetime: the same instant, and the stem is its local date and time.
    CHECK(beatless::test::python_output("from datetime import datetime\nx = datetime.fromisoformat('" + iso +
                                        "')\nprint(int(x.timestamp()), x.strftime('%Y-%m-%d_%H%M%S'))") ==
          "1796314502 " + stem);
}

TEST_CASE("free_take_path adds -2, -3 when a name is taken; list_takes is newest first and skips bad sidecars") {
    TempDir d;
    const std::time_t when = 1796314502;
    const fs::path first = ui::free_take_path(d.path(), when);
    CHECK(first.filename().string() == ui::take_stem(when) + ".flac");
    std::ofstream(first.string()) << "x";
    const fs::path second = ui::free_take_path(d.path(), when);
    CHECK(second.filename().string() == ui::take_stem(when) + "-2.flac");
    std::ofstream(ui::take_sidecar_path(second).string()) << "x";  // a sidecar alone also takes the name
    CHECK(ui::free_take_path(d.path(), when).filename().string() == ui::take_stem(when) + "-3.flac");
    fs::remove(first);
    fs::remove(ui::take_sidecar_path(second));

    // Three takes: the offsets differ, so the order is by instant, not by text.
    const char* starts[] = {"2026-12-03T10:00:00+01:00", "2026-12-03T09:30:00-02:00", "2026-12-03T10:30:00+02:00"};
    for (int i = 0; i < 3; ++i) {
        ui::TakeInfo t = sample_take(d.path(), "take" + std::to_string(i));
        t.started = starts[i];
        ui::write_take_sidecar(t);
        std::ofstream(t.audio_path.string()) << "x";
    }
    std::ofstream(d.file("broken.toml")) << "kind = \"take\"\nformat = 1\n";
    std::ofstream(d.file("orphan.toml")) << "kind = \"take\"\nformat = 1\nrate_hz = 48000\nchannels = 1\nroot_hz = 1\n";
    std::vector<std::string> problems;
    const auto takes = ui::list_takes(d.path(), &problems);
    REQUIRE(takes.size() == 3);
    // UTC: take0 09:00, take1 11:30, take2 08:30.
    CHECK(takes[0].audio_path.filename() == "take1.flac");
    CHECK(takes[1].audio_path.filename() == "take0.flac");
    CHECK(takes[2].audio_path.filename() == "take2.flac");
    REQUIRE(problems.size() == 2);
    std::sort(problems.begin(), problems.end());
    CHECK(problems[0] == d.file("broken.toml") + ":1: `rate_hz`: required key missing");
    CHECK(problems[1] == d.file("orphan.flac") + ": no such file (its sidecar is there)");
    CHECK(ui::list_takes(d.file("nothing-here")).empty());
}

TEST_CASE("a take's FLAC reads back as the input quantised to 24 bits; 16- and 24-bit input bit for bit") {
    TempDir d;
    const std::string path = d.file("t.flac");
    std::vector<float> in(2 * 30000);
    for (std::size_t i = 0; i < in.size(); ++i) {
        const double t = static_cast<double>(i / 2) / 48000.0;
        in[i] = static_cast<float>((i % 2 ? 0.3 : 0.7) * std::sin(2 * M_PI * (i % 2 ? 330.0 : 220.0) * t));
    }
    in[10] = 1.5f;  // clipped to the largest code
    in[11] = -1.0f;
    // 16-bit values (k / 2^15) and 24-bit values (k / 2^23) must come back unchanged.
    in[100] = 12345.0f / 32768.0f;
    in[101] = -4321987.0f / 8388608.0f;
    {
        audio::TakeWriter w(path, 48000, 2);
        for (std::size_t at = 0; at < in.size(); at += 2 * 1000)
            w.write(std::span<const float>(in).subspan(at, std::min<std::size_t>(2000, in.size() - at)));
        CHECK(w.frames_written() == 30000);
        w.close();
    }
    audio::SoundReader r(path);
    CHECK(r.info().format == "FLAC");
    CHECK(r.info().channels == 2);
    CHECK(r.info().len_frames == 30000);
    std::vector<float> back;
    for (auto b = r.read_frames(); !b.empty(); b = r.read_frames()) back.insert(back.end(), b.begin(), b.end());
    REQUIRE(back.size() == in.size());
    std::size_t same = 0;
    for (std::size_t i = 0; i < in.size(); ++i)
        if (back[i] == static_cast<float>(std::round(std::clamp(in[i] * 8388608.0, -8388608.0, 8388607.0)) / 8388608.0))
            ++same;
    CHECK(same == in.size());
    CHECK(back[10] == 8388607.0f / 8388608.0f);
    CHECK(back[11] == -1.0f);
    CHECK(back[100] == in[100]);
    CHECK(back[101] == in[101]);
}

TEST_CASE("recover_takes finalises a take cut short and leaves finished and fresh ones alone") {
    TempDir d;
    const int rate = 44100;
    std::vector<float> in(rate * 3);
    for (std::size_t i = 0; i < in.size(); ++i)
        in[i] = static_cast<float>(0.5 * std::sin(2 * M_PI * 196.0 * static_cast<double>(i) / rate));
    ui::TakeInfo t = sample_take(d.path(), "cut");
    t.channels = 1;
    t.rate_hz = rate;
    t.players.clear();
    t.duration_s.reset();
    t.complete = false;
    {
        // Written for 3 s with a sync each second, then copied as a killed program would leave it.
        audio::TakeWriter w(d.file("writing.flac"), rate, 1);
        for (std::size_t at = 0; at < in.size(); at += rate) {
            w.write(std::span<const float>(in).subspan(at, rate));
            w.sync();
        }
        fs::copy_file(d.file("writing.flac"), t.audio_path);
        w.close();
        fs::remove(d.file("writing.flac"));
    }
    ui::write_take_sidecar(t);

    // Written a moment ago: a recorder may still be at it, so it is left alone.
    CHECK(ui::recover_takes(d.path()).empty());
    CHECK_FALSE(ui::read_take_sidecar(t.sidecar_path).complete);

    age_file(t.audio_path, 60);
    const auto rec = ui::recover_takes(d.path());
    REQUIRE(rec.size() == 1);
    CHECK(rec[0].problem == "");
    // libFLAC encodes 4096-frame blocks; what was synced is whole blocks, so at most one block is lost.
    CHECK(rec[0].frames >= static_cast<std::int64_t>(in.size()) - 4096);
    CHECK(rec[0].frames <= static_cast<std::int64_t>(in.size()));
    const ui::TakeInfo r = ui::read_take_sidecar(t.sidecar_path);
    CHECK(r.complete);
    REQUIRE(r.duration_s);
    CHECK(std::abs(*r.duration_s - static_cast<double>(rec[0].frames) / rate) <= 0.5e-6);  // written with 6 decimals
    audio::SoundReader back(t.audio_path.string());
    CHECK(back.info().len_frames == rec[0].frames);
    std::vector<float> got;
    for (auto b = back.read(); !b.empty(); b = back.read()) got.insert(got.end(), b.begin(), b.end());
    REQUIRE(static_cast<std::int64_t>(got.size()) == rec[0].frames);
    std::size_t same = 0;
    for (std::size_t i = 0; i < got.size(); ++i)
        if (got[i] == audio::pcm24_value(audio::pcm24_code(in[i]))) ++same;
    CHECK(same == got.size());
    // Already complete: nothing more to do.
    age_file(t.audio_path, 60);
    CHECK(ui::recover_takes(d.path()).empty());

    // A FLAC that cannot be decoded at all: said, and the take left as it was.
    ui::TakeInfo bad = sample_take(d.path(), "garbage");
    bad.complete = false;
    bad.duration_s.reset();
    ui::write_take_sidecar(bad);
    std::ofstream(bad.audio_path.string()) << "not a flac file at all";
    age_file(bad.audio_path, 60);
    const auto rec2 = ui::recover_takes(d.path());
    REQUIRE(rec2.size() == 1);
    CHECK(rec2[0].problem.starts_with(bad.audio_path.string() + ": cannot be recovered ("));
    CHECK_FALSE(ui::read_take_sidecar(bad.sidecar_path).complete);
}

TEST_CASE("regenerate_drone plays the sidecar's drone: its root before and after a change, its level, then silence") {
    // numpy measures what was rendered: the strongest bin of a Hann-windowed rfft, refined by a parabola through
    // the log magnitudes (Smith, "Spectral Audio Signal Processing", quadratic interpolation of spectral peaks), and
    // the RMS in dBFS. A pure drone's RMS is its level (audio/drone.h: level_dbfs is the RMS of the root tone).
    TempDir d;
    ui::TakeInfo t = sample_take(d.path(), "regen");
    t.channels = 1;
    t.rate_hz = 48000;
    t.root_hz = 110.0;
    t.drone.on = true;
    t.drone.timbre = audio::Timbre::pure;
    t.drone.level_dbfs = -30.0;
    t.drone.fifth = false;
    t.drone.events = {{1.0, ui::DroneEventKind::root, 98.0}, {2.0, ui::DroneEventKind::off, 98.0}};
    const std::vector<float> x = ui::regenerate_drone(t, 3 * 48000);
    REQUIRE(x.size() == 3u * 48000u);
    const std::string wav = d.file("regen.wav");
    audio::write_wav(wav, x, 48000.0, audio::SampleFormat::float32);
    const std::string got = beatless::test::python_output(
        "import numpy as np, scipy.io.wavfile as w, warnings\n"
        "warnings.simplefilter('ignore')  # scipy does not know libsndfile's PEAK chunk\n"
        "r, x = w.read('" +
        wav +
        "')\n"
        "def peak(a, b):\n"
        "    s = x[int(a * r):int(b * r)]\n"
        "    m = np.log(np.abs(np.fft.rfft(s * np.hanning(len(s)))) + 1e-30)\n"
        "    k = int(np.argmax(m))\n"
        "    p = 0.5 * (m[k - 1] - m[k + 1]) / (m[k - 1] - 2 * m[k] + m[k + 1])\n"
        "    return (k + p) * r / len(s)\n"
        "def db(a, b):\n"
        "    s = x[int(a * r):int(b * r)].astype(np.float64)\n"
        "    return 20 * np.log10(np.sqrt(np.mean(s * s)) + 1e-30)\n"
        "print('%.2f %.2f %.2f %.1f' % (peak(0.3, 0.95), peak(1.3, 1.95), db(0.3, 0.95), db(2.2, 3.0)))\n");
    double f1 = 0, f2 = 0, l1 = 0, l_off = 0;
    REQUIRE(std::sscanf(got.c_str(), "%lf %lf %lf %lf", &f1, &f2, &l1, &l_off) == 4);
    CHECK(f1 == doctest::Approx(110.0).epsilon(0.002));
    CHECK(f2 == doctest::Approx(98.0).epsilon(0.002));
    CHECK(l1 == doctest::Approx(-30.0).epsilon(0.02));
    CHECK(l_off < -100.0);
}
