// ClipPlayer — plays one recorded clip (a held note of a take, alone or with its drone) in the live output: the clip
// is made and loaded off the audio thread and handed over whole through an atomic pointer; the callback only reads
// it, with a raised-cosine fade in and out, and may hush the live drone meanwhile (the same fades, crossed).
// Method: lock-free hand-over (one pending and one retired slot, freed by the control thread); the limiter is the
// drone's (audio/drone.h), which mixes the clip in before limiting.
// Thread: play(), stop(), collect() on one control thread; mix() on the audio callback.
#pragma once

#include <atomic>
#include <cstddef>
#include <cstdint>
#include <memory>
#include <span>
#include <vector>

namespace beatless::audio {

struct Clip {
    std::vector<float> samples;  // mono, at the output's rate, already scaled (the gain below multiplies it)
    double gain = 1.0;           // linear gain applied while it plays (default 1)
    double fade_s = 0.03;        // raised-cosine fade in, out, and on a stop (default 30 ms)
    bool hush_drone = false;     // the drone (and reference voice) fades out while the clip sounds (default no)
};

// A clip at another rate, by linear interpolation (control thread; pitch is kept, the top octave is dulled a little).
std::vector<float> resample_linear(std::span<const float> in, double from_hz, double to_hz);

class ClipPlayer {
public:
    explicit ClipPlayer(double sample_rate_hz);  // allocates nothing more later on the audio thread
    ~ClipPlayer();
    ClipPlayer(const ClipPlayer&) = delete;
    ClipPlayer& operator=(const ClipPlayer&) = delete;

    // Control thread. Plays `clip` from its start; one playing fades out first (no click). Frees retired clips.
    void play(std::unique_ptr<Clip> clip);
    // Control thread. Fades out what plays (fade_s) and drops what waits.
    void stop();
    // Control thread. Frees a clip the callback is done with (also done by play and stop).
    void collect();
    // Any thread: a clip is sounding or waiting to.
    bool busy() const noexcept {
        return pending_.load(std::memory_order_acquire) != nullptr || sounding_.load(std::memory_order_acquire);
    }
    // Any thread: seconds of the current clip played so far.
    double position_s() const noexcept {
        return static_cast<double>(pos_seen_.load(std::memory_order_relaxed)) / rate_hz_;
    }

    // Audio callback: out[i] = out[i] * hush + clip[i] * gain * fade. Allocates: no. Locks: no.
    void mix(std::span<float> out) noexcept;

private:
    double fade(std::size_t k) const noexcept;  // raised cosine, 0 at k = 0, 1 at k >= fade_len_

    double rate_hz_;
    std::atomic<Clip*> pending_{nullptr};  // control -> audio
    std::atomic<Clip*> retired_{nullptr};  // audio -> control (freed there)
    std::atomic<std::uint32_t> stop_count_{0};
    std::atomic<bool> sounding_{false};
    std::atomic<std::int64_t> pos_seen_{0};
    // Audio thread only.
    Clip* current_ = nullptr;
    std::size_t pos_ = 0;       // next sample of current_
    std::size_t fade_len_ = 1;  // current_'s fade in samples
    std::size_t ramp_ = 0;      // 0 .. fade_len_: where the fade in (or the fade out on a stop) stands
    bool leaving_ = false;      // fading out early (stop or a new clip)
    std::uint32_t stops_seen_ = 0;
};

}  // namespace beatless::audio
