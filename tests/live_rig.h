// LiveRig — the whole live path on a fake duplex device (tests and bench).
//
// The engine opens FakeAudioSystem's one duplex device; each step hands one
// block of "microphone" to the capture callback and takes one block of
// output from the playback callback, the way a sound card does. The
// microphone is a known voice (precomputed samples) plus, when the drone
// plays, the engine's own output one block later through a SimulatedRoom
// (delay, gain, one-pole low-pass): the microphone hears the speakers.
// After each block the analysis runs in this thread (start(false)), so every
// reading is stamped with the number of samples captured when it was
// published: latency is counted in samples, not wall time.
#pragma once

#include "audio/engine.h"
#include "audio/fake_device.h"
#include "audio/room.h"
#include "pitch/targets.h"

#include <memory>
#include <vector>

namespace beatless::test {

struct Stamped {
    pitch::Reading r;
    std::int64_t captured = 0;  // samples captured when r was published
};

struct LiveRig {
    double rate_hz;
    std::size_t block;
    audio::FakeAudioSystem sys;
    audio::Engine engine;
    std::unique_ptr<audio::SimulatedRoom> room;
    std::vector<float> voice;           // the performer, at the microphone
    std::vector<Stamped> readings;
    std::int64_t captured = 0;

    LiveRig(double rate, std::size_t block_len, const audio::EngineConfig& base = {})
        : rate_hz(rate), block(block_len), sys({audio::fake_device(0, "Fake duplex", 2, 2, rate)}, {rate}),
          engine(with_rate(base, rate, block_len), &sys) {}

    static audio::EngineConfig with_rate(audio::EngineConfig c, double rate, std::size_t block_len) {
        c.sample_rate_hz = rate;
        c.block_len_frames = block_len;
        return c;
    }

    // Opens the device, sets readings and the drone (through a room unless room_cfg.gain == 0).
    void open(const pitch::ReadingConfig& rc, pitch::TargetSet set, const audio::DroneSettings& drone,
              audio::RoomConfig room_cfg) {
        engine.open_input_device("Fake");
        engine.open_output_device("Fake");
        engine.set_readings(rc, std::move(set));
        engine.set_drone(drone);
        engine.start(false);
        room_cfg.sample_rate_hz = rate_hz;
        room = std::make_unique<audio::SimulatedRoom>(room_cfg);
    }

    // Runs the voice from where it stopped to its end.
    void run() {
        std::vector<float> in(block), out(2 * block), spk(block, 0.0f);
        pitch::Reading got[512];
        while (static_cast<std::size_t>(captured) + block <= voice.size()) {
            std::copy_n(voice.begin() + captured, block, in.begin());
            room->process_add(spk, in);  // last block's output, heard through the room
            sys.drive(in, out, 1, 2);
            for (std::size_t i = 0; i < block; ++i) spk[i] = out[2 * i];
            captured += static_cast<std::int64_t>(block);
            engine.analyse_available();
            for (std::size_t k; (k = engine.take_readings(got)) > 0;)
                for (std::size_t i = 0; i < k; ++i) readings.push_back({got[i], captured});
        }
    }
};

}  // namespace beatless::test
