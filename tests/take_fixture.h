// A generated take written as a recorded one: its FLAC (audio/take_writer.h, 24-bit) and its sidecar (root A2,
// 7-limit, Practice), for the Review screen and take clip tests.
#pragma once

#include "audio/take_writer.h"
#include "ui/session/take_file.h"

#include <filesystem>
#include <span>
#include <string>

namespace beatless::test {

inline ui::TakeInfo write_test_take(const std::filesystem::path& dir, const std::string& stem,
                                    std::span<const float> samples, double rate_hz, double dur_s, bool drone_on = false,
                                    int voices = 1) {
    const std::filesystem::path flac = dir / (stem + ".flac");
    audio::TakeWriter w(flac.string(), rate_hz, 1);
    w.write(samples);
    w.close();
    ui::TakeInfo info;
    info.audio_path = flac;
    info.sidecar_path = ui::take_sidecar_path(flac);
    info.rate_hz = rate_hz;
    info.root_hz = 110.0;
    info.root = "A2";
    info.targets = "7-limit";
    info.screen = "practice";
    info.drone.on = drone_on;
    info.voices = voices;
    info.drone.level_dbfs = -30.0;
    info.duration_s = dur_s;
    info.complete = true;
    ui::write_take_sidecar(info);
    return info;
}

}  // namespace beatless::test
