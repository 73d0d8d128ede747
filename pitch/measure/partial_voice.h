// PartialVoice — finds a steady voice hidden on a drone's partial (330 Hz over a 110 Hz drone): the drone comb
// (pitch/dsp/drone_comb.h) removes it with the drone, so the tracker hears nothing while the raw signal grows.
// Method: ours. First pass (PartialLevels): per frame, the raw level and the comb output's level. A stretch with no
// tracked note where the raw level stands well above the drone's own (its quiet frames' level) while the comb's
// output stays far below the raw level (the added sound is periodic in the drone's period) is a candidate. Second
// look (partial_amplitudes): the Hann-weighted amplitude of each partial k f0 over whole drone periods, in the
// candidate and beside it; the lowest partial standing well above the drone's own is the voice.
// Thread: one at a time. Allocates: PartialLevels grows a frame list (8 bytes a frame).
#pragma once

#include <span>
#include <vector>

namespace beatless::pitch {

struct PartialVoiceConfig {
    double sample_rate_hz = 44100.0;
    double drone_hz = 110.0;      // the drone's fundamental (the comb's root)
    double frame_s = 0.02;        // level frames (default 20 ms)
    double rise_db = 3.0;         // raw level above the drone's own (default 3 dB: a voice as loud as the drone)
    double periodic_db = 12.0;    // the comb's output at least this far under the raw level (default 12 dB)
    double drone_pct = 0.2;       // the drone's own level: this percentile of the note-free, sounding frames (0.2)
    double silence_dbfs = -60.0;  // frames quieter than this are not the drone (default -60 dBFS)
    double min_len_s = 0.3;       // shorter stretches are dropped (default 0.3 s)
    double partial_db = 6.0;      // a partial this far above the drone's own names the voice (default 6 dB)
    int max_partial = 16;         // partials looked at, k f0 below 0.45 rate (default 16)
};

// A stretch [start_s, end_s) in seconds.
struct TimeSpan {
    double start_s = 0.0;
    double end_s = 0.0;
};

struct PartialVoice {
    double start_s = 0.0;
    double end_s = 0.0;
    int partial = 0;               // k: the voice sits at k x the drone (0 while not yet named)
    double f_hz = 0.0;             // k x drone_hz
    double rise_db = 0.0;          // the raw level above the drone's own, median over the stretch
    double partial_rise_db = 0.0;  // partial k above the drone's own partial k
};

class PartialLevels {
public:
    explicit PartialLevels(const PartialVoiceConfig& config);
    // The same samples before and after the comb. Thread: one at a time. Allocates: the frame list grows.
    void push(std::span<const float> raw, std::span<const float> combed);
    // The candidate stretches outside `busy` (the tracked notes, widened by the caller): partial 0, not yet named.
    std::vector<PartialVoice> candidates(const std::vector<TimeSpan>& busy) const;
    // The drone's own level (dBFS) over note-free sounding frames; NaN when there are none.
    double drone_level_dbfs(const std::vector<TimeSpan>& busy) const;
    // Frames [from_s, to_s) all note-free and within rise_db / 2 of the drone's own level: a stretch of drone alone.
    bool drone_alone(double from_s, double to_s, const std::vector<TimeSpan>& busy) const;

private:
    PartialVoiceConfig cfg_;
    std::size_t frame_len_ = 0;
    std::size_t filled_ = 0;
    double raw_sum_ = 0.0, comb_sum_ = 0.0;
    std::vector<float> raw_db_, comb_db_;  // per frame, dBFS
    bool in_busy(std::size_t frame, const std::vector<TimeSpan>& busy) const;
};

// Amplitude of each partial k = 1..count of drone_hz in `x` (Hann window over the whole drone periods that fit;
// the window's zeros fall on the other partials). out[k - 1]; 0 for partials at or above 0.45 rate.
std::vector<double> partial_amplitudes(std::span<const float> x, double sample_rate_hz, double drone_hz, int count);

// Names each candidate's partial from its samples and a stretch of drone alone beside it: the lowest partial at least
// partial_db above the drone's own, beyond the rise all partials share (a swell of the drone); returns false (not a voice on a partial) when none is.
bool name_partial(PartialVoice& v, std::span<const float> during, std::span<const float> drone_alone,
                  const PartialVoiceConfig& config);

}  // namespace beatless::pitch
