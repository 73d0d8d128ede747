// RootDetector — the steady drone or pedal tone under a whole recording.
// Method: long Hann-windowed FFT frames (KissFFT, out of place) accumulated per bin; harmonic summation (A. Klapuri,
// ISMIR 2006) picks candidates; phase-vocoder frequencies (Flanagan & Golden, Bell Syst. Tech. J. 45, 1966) of the
// agreeing harmonics give the root. Steps in root_detect.cpp.
// Thread: one at a time. Allocates: in the constructor only; memory is constant whatever the length.
#pragma once

#include "pitch/dsp/real_fft.h"

#include <complex>
#include <cstddef>
#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <vector>

namespace beatless::pitch {

struct RootDetectConfig {
    double sample_rate_hz = 44100.0;  // 8 000 .. 192 000
    double frame_s = 0.75;            // FFT frame, rounded up to a fast even size (default 0.75 s)
    int hops_per_frame = 3;           // frame / hop, 3 .. 32 (default 3: a 0.25 s hop, 1.25-1.75
                                      //   periods of a 5-7 Hz vibrato, so a vibrato never looks steady)
    double f_min_hz = 40.0;           // lowest root searched (default 40 Hz)
    double f_max_hz = 1000.0;         // highest root searched (default 1 kHz)
    int max_harmonic = 10;            // harmonics summed and fitted (default 10)
    double max_freq_hz = 8000.0;      // bins above are ignored (default 8 kHz)
    double silence_dbfs = -60.0;      // quieter frames (RMS) are skipped (default -60 dBFS)
    double min_confidence = 0.5;      // below this there is no steady root (default 0.5)
};

enum class RootStatus {
    found,           // a steady root, confidence >= min_confidence
    no_steady_root,  // sound, but nothing steady enough (root_hz is the best candidate)
    no_sound,        // no frame above silence_dbfs
};

struct RootEstimate {
    RootStatus status = RootStatus::no_sound;
    double root_hz = 0.0;       // 0 when no_sound
    double confidence = 0.0;    // presence * coherence, 0..1
    double presence = 0.0;      // 0..1
    double coherence = 0.0;     // 0..1
    int harmonics_used = 0;     // partials that agreed on the root
    double spread_cents = 0.0;  // weighted spread of the harmonics' f_h / h around the root
    double sounding_s = 0.0;    // time analyzed above silence
    bool found() const { return status == RootStatus::found; }
};

class RootDetector {
public:
    explicit RootDetector(const RootDetectConfig& config);  // throws Error on invalid settings

    // Appends samples (any block size); non-finite samples count as 0.
    // Thread: one at a time. Allocates: no. Locks: no.
    void push(std::span<const float> samples) noexcept;

    // The estimate from everything pushed so far (a file shorter than one
    // frame is analyzed zero-padded). Allocates: no.
    RootEstimate estimate() noexcept;

    void reset() noexcept;
    std::size_t frame_len_samples() const noexcept { return n_; }
    double bin_hz() const noexcept { return bin_hz_; }
    std::size_t frames_analyzed() const noexcept { return frames_; }
    std::size_t bad_samples() const noexcept { return bad_; }

private:
    void process_frame(std::size_t valid) noexcept;
    double salience(double f0_hz) const noexcept;
    RootEstimate refine(double f0_guess, bool tight) noexcept;

    RootDetectConfig cfg_;
    std::size_t n_ = 0;     // frame length
    std::size_t hop_ = 0;   // n_ / hops_per_frame
    std::size_t kmax_ = 0;  // highest bin used
    double bin_hz_ = 0.0;
    std::unique_ptr<RealFft> fft_;
    std::vector<float> window_;
    std::vector<float> buf_;  // pending samples, n_ long
    std::size_t fill_ = 0;
    std::vector<float> in_;  // windowed frame
    std::vector<std::complex<float>> spec_, prev_;
    bool prev_valid_ = false;
    std::vector<double> power_;                // summed |X|^2 per bin
    std::vector<std::complex<double>> cross_;  // summed X_i conj(X_{i-1})
    std::vector<double> cross_mag_;            // summed |X_i| |X_{i-1}|
    std::vector<std::uint32_t> peaks_;         // frames in which the bin was a clear peak
    std::vector<double> steady_;               // |summed cross spectrum| per bin, set by estimate()
    std::vector<double> scratch_;              // median work
    std::vector<double> cand_s_;               // salience per candidate (log grid)
    struct Part {
        double f0_hz, weight, power, presence, coherence, purity;
        int harmonic;
    };
    std::vector<Part> parts_;  // per harmonic, during refine()
    std::size_t frames_ = 0;   // frames above silence
    std::size_t bad_ = 0;
    std::size_t total_ = 0;  // samples pushed
    bool padded_ = false;    // a short input was analyzed zero-padded
};

}  // namespace beatless::pitch
