// Voicing for the YIN tracker: a running noise floor and the calibrated probability that a frame's pitch is right.
// Method: the floor is the minimum of the frame powers over the last few seconds (minimum statistics, R. Martin,
// "Noise power spectral density estimation based on optimal smoothing and minimum statistics", IEEE Trans. Speech
// Audio Process. 9(5), 504-512, 2001, broadband); the harmonic power (1 - d') P of the frame (de Cheveigné and
// Kawahara 2002, sec. VI) over that floor and d' itself index a table of the share of frames within 50 cents,
// counted on generated frames (calibration by binning, B. Zadrozny and C. Elkan, ICML 2001, from memory).
// Table, fit and limits: DEVELOPERS.md, "Methods in detail".
// Thread: one at a time (the tracker's). Allocates: no.
#pragma once

#include <array>
#include <cstddef>

namespace beatless::pitch {

// What a frame's voicing is judged on.
struct VoicingEvidence {
    double aperiodicity = 1.0;  // YIN's d' at the chosen dip (0 perfectly periodic .. 1 and above noise)
    double level_dbfs = -200;   // the frame's RMS level, dB re full scale
    double floor_dbfs = -200;   // the running noise floor at that frame, dB re full scale
};

// Probability (0..1) that a frame with this evidence carries a pitch within 50 cents of the true one; a frame is
// reported voiced at 0.5 and above. Allocates: no.
double voicing_probability(const VoicingEvidence& e) noexcept;

// The running noise floor: the minimum frame power over the last window_s, kept as the minima of kSubwindows
// sub-windows (Martin 2001, sec. IV) so that each frame costs O(1). Allocates: no.
class NoiseFloor {
public:
    static constexpr std::size_t kSubwindows = 8;

    // hop_s: time between frames; window_s: how far back the minimum reaches (default 3 s: longer than a breath
    // between phrases, so a held note over steady noise keeps its floor).
    explicit NoiseFloor(double hop_s, double window_s = 3.0) noexcept;
    void reset() noexcept;
    // Takes the next frame's level and returns the floor including it (dBFS). Frames the tracker calls silent are
    // not given; before any frame the floor is the level itself (no evidence either way).
    double update(double level_dbfs) noexcept;
    double floor_dbfs(double level_dbfs) const noexcept;  // the floor now, without a new frame

private:
    std::size_t per_sub_ = 1;  // frames per sub-window
    std::size_t in_sub_ = 0;   // frames in the current sub-window
    std::size_t filled_ = 0;   // finished sub-windows kept (up to kSubwindows)
    std::size_t next_ = 0;     // ring index for the next finished sub-window
    bool seen_ = false;        // a frame was given since reset
    double current_ = 0.0;     // minimum power of the current sub-window
    std::array<double, kSubwindows> mins_{};
};

}  // namespace beatless::pitch
