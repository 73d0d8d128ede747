// Take clips: what the Review screen plays of a held note is the take's own samples over the note (with the stated
// margins), at one gain that makes their RMS 1; with the drone, the drone regenerated from the sidecar with the same
// phases as over the whole take; then the target, a tone at the target's frequency.
//
// Sources: RMS by its definition (the square root of the mean square); the target's frequency from the root and the
// ratio (7/5 an octave over A2 = 308 Hz; cents by Ellis (1885), 1200 log2(f / root)); the tone's frequency measured by numpy:
// the strongest bin of a Hann-windowed rfft refined by a parabola through the log magnitudes (J. O. Smith, "Spectral
// Audio Signal Processing", quadratic interpolation of spectral peaks). Takes are generated (tests/mix_signals.h).
#include "audio/soundfile.h"
#include "audio/take_writer.h"
#include "pitch/base/error.h"
#include "tests/cli.h"
#include "tests/mix_signals.h"
#include "tests/take_fixture.h"
#include "ui/session/take_clip.h"
#include "ui/session/take_file.h"

#include <doctest/doctest.h>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

using beatless::test::TempDir;
namespace fs = std::filesystem;
namespace ui = beatless::ui;
namespace audio = beatless::audio;
using namespace beatless::testsig;

namespace {

constexpr double kFs = 44100.0;

// A take with its sidecar: the 7-limit set, root A2, the drone (round, -30 dBFS) on from the start.
std::string write_take(const fs::path& dir, const Take& take) {
    return beatless::test::write_test_take(dir, "2026-12-03_180000", take.samples, kFs, take.dur_s, true)
        .audio_path.string();
}

}  // namespace

TEST_CASE("a note's clip is the take's own samples over the note and its margins, at RMS 1 over the note") {
    TempDir dir;
    // The microphone heard no drone (headphones): the voice alone, 7/5 +6 c and 3/2 -8 c.
    const Take take = drone_and_voice(kFs, 110.0, {{7.0 / 5.0, 6.0}, {3.0 / 2.0, -8.0}}, 5, 1, 1.6, 1e-3, 0.0);
    const std::string path = write_take(dir.path(), take);
    const ui::ReviewedTake r = ui::review_take(path, "7-limit");
    REQUIRE(r.error == "");
    REQUIRE(r.analysis.notes.size() == 2);
    const std::vector<float> file = audio::SoundReader::read_all(path);
    for (std::size_t k = 0; k < 2; ++k) {
        CAPTURE(k);
        const auto& n = r.analysis.notes[k];
        const ui::NoteClip c = ui::make_note_clip(r, k, ui::ClipKind::note);
        CHECK(c.rate_hz == kFs);
        CHECK(c.first_frame == static_cast<std::int64_t>(std::floor((n.start_s - ui::kClipMarginS) * kFs)));
        CHECK(c.note_frames ==
              static_cast<std::int64_t>(std::ceil((n.end_s + ui::kClipMarginS) * kFs)) - c.first_frame);
        REQUIRE(c.samples.size() == static_cast<std::size_t>(c.note_frames));
        std::size_t same = 0;
        for (std::size_t i = 0; i < c.samples.size(); ++i)
            same +=
                c.samples[i] == static_cast<float>(file[static_cast<std::size_t>(c.first_frame) + i] * c.voice_gain);
        CHECK(same == c.samples.size());
        // RMS 1 over the note itself.
        double sum = 0.0;
        const auto a = static_cast<std::size_t>(n.start_s * kFs) - static_cast<std::size_t>(c.first_frame);
        const auto b = static_cast<std::size_t>(n.end_s * kFs) - static_cast<std::size_t>(c.first_frame);
        for (std::size_t i = a; i < b; ++i) sum += static_cast<double>(c.samples[i]) * c.samples[i];
        CHECK(std::sqrt(sum / static_cast<double>(b - a)) == doctest::Approx(1.0).epsilon(1e-4));
    }
    CHECK_THROWS_AS(ui::make_note_clip(r, 2, ui::ClipKind::note), beatless::Error);
}

TEST_CASE(
    "with its drone: the sidecar's drone regenerated with the phases it had over the whole take; then the "
    "target: a tone at the target's frequency after the gap") {
    TempDir dir;
    const Take take = drone_and_voice(kFs, 110.0, {{7.0 / 5.0, 6.0}, {3.0 / 2.0, -8.0}}, 5, 1, 1.6, 1e-3, 0.0);
    const std::string path = write_take(dir.path(), take);
    const ui::ReviewedTake r = ui::review_take(path, "7-limit");
    REQUIRE(r.analysis.notes.size() == 2);
    REQUIRE(r.analysis.drone_hz == 0.0);  // none in the recording
    const ui::NoteClip alone = ui::make_note_clip(r, 1, ui::ClipKind::note);
    const ui::NoteClip with = ui::make_note_clip(r, 1, ui::ClipKind::with_drone);
    CHECK(with.drone_regenerated);
    REQUIRE(with.samples.size() == alone.samples.size());
    // The drone over the whole take, rendered at once, cut where the clip lies, at RMS 1 for the root tone.
    const ui::TakeInfo info = ui::read_take_sidecar(ui::take_sidecar_path(path));
    const std::vector<float> whole = ui::regenerate_drone(info, with.first_frame + with.note_frames);
    const float to_unit = static_cast<float>(1.0 / std::pow(10.0, -30.0 / 20.0));
    double worst = 0.0;
    for (std::size_t i = 0; i < with.samples.size(); ++i)
        worst = std::max(worst, std::fabs(static_cast<double>(with.samples[i] - alone.samples[i]) -
                                          whole[static_cast<std::size_t>(with.first_frame) + i] * to_unit));
    CHECK(worst < 1e-5);
    // The part regenerated alone is the same samples as the whole rendering (the phases run on).
    const std::vector<float> part = ui::regenerate_drone(info, with.first_frame, 4096);
    std::size_t same = 0;
    for (std::size_t i = 0; i < part.size(); ++i)
        same += part[i] == whole[static_cast<std::size_t>(with.first_frame) + i];
    CHECK(same == part.size());

    // Then the target: the voice sings an octave up (mix_signals.h), so 7/5 over A2 an octave up is 308 Hz; the first
    // note's tone follows its recording and a 0.25 s gap.
    const ui::NoteClip then = ui::make_note_clip(r, 0, ui::ClipKind::then_target);
    const auto gap = static_cast<std::size_t>(ui::kClipGapS * kFs);
    REQUIRE(then.samples.size() > static_cast<std::size_t>(then.note_frames) + gap + 8192);
    for (std::size_t i = 0; i < gap; ++i) REQUIRE(then.samples[static_cast<std::size_t>(then.note_frames) + i] == 0.0f);
    const std::vector<float> tone(then.samples.begin() + then.note_frames + static_cast<std::ptrdiff_t>(gap),
                                  then.samples.end());
    const std::string wav = dir.file("tone.wav");
    audio::write_wav(wav, tone, kFs, audio::SampleFormat::float32);
    const std::string got = beatless::test::python_output(
        "import numpy as np, scipy.io.wavfile as w, warnings\n"
        "warnings.simplefilter('ignore')\n"
        "r, x = w.read('" +
        wav +
        "')\n"
        "s = x[len(x) // 8: len(x) * 7 // 8].astype(np.float64)\n"
        "m = np.log(np.abs(np.fft.rfft(s * np.hanning(len(s)))) + 1e-30)\n"
        "lo = int(250 * len(s) / r); k = lo + int(np.argmax(m[lo:int(400 * len(s) / r)]))\n"
        "p = 0.5 * (m[k - 1] - m[k + 1]) / (m[k - 1] - 2 * m[k] + m[k + 1])\n"
        "print('%.4f %.4f' % ((k + p) * r / len(s), np.sqrt(np.mean(s * s))))\n");
    double f = 0.0, rms = 0.0;
    REQUIRE(std::sscanf(got.c_str(), "%lf %lf", &f, &rms) == 2);
    CHECK(f == doctest::Approx(308.0).epsilon(0.0003));
    CHECK(rms == doctest::Approx(1.0).epsilon(0.02));
}

TEST_CASE("with its drone, when the microphone heard it: the recording as it is") {
    TempDir dir;
    const Take take = drone_and_voice(kFs, 110.0, {{7.0 / 5.0, 6.0}}, 9);  // drone in the recording
    const std::string path = write_take(dir.path(), take);
    const ui::ReviewedTake r = ui::review_take(path, "7-limit");
    REQUIRE(!r.analysis.notes.empty());
    REQUIRE(r.analysis.drone_hz > 0.0);
    const ui::NoteClip alone = ui::make_note_clip(r, 0, ui::ClipKind::note);
    const ui::NoteClip with = ui::make_note_clip(r, 0, ui::ClipKind::with_drone);
    CHECK(with.drone_recorded);
    CHECK(!with.drone_regenerated);
    CHECK(with.samples == alone.samples);
}
