// TwoVoiceTracker — the method in detail (summary in two_voice.h).
//
// Method: harmonic-amplitude summation with iterative estimation and
// cancellation, A. Klapuri, "Multiple fundamental frequency estimation by
// summing harmonic amplitudes", Proc. ISMIR 2006, pp. 216-221. Steps per
// frame: (1) Blackman-Harris window, two real FFTs (KissFFT, out of place) a
// quarter frame apart; (2) spectral peaks, each peak's frequency from the
// phase advance of its bins between the two transforms (phase vocoder,
// Flanagan & Golden 1966), far finer than a bin; (3) salience of every peak
// as a fundamental, sum over h of g(f0, h) * amplitude of the peak matched
// at h*f0, g = (f0 + 52 Hz) / (h*f0 + 320 Hz) (Klapuri 2006); (4) the most
// salient voice is taken, its partials cancelled down to a smooth spectral
// envelope so shared partials keep the rest, and the second voice is the
// most salient of what remains; (5) each f0 is refined by weighted least
// squares over its own partials, leaving out those within the window's
// main lobe of the other voice's partials. The interval's nearest target
// names the coinciding pair (p-th partial of the low voice, q-th of the
// high one, f_high/f_low = p/q); its beat rate is measured from the two
// partials' frequency difference when the spectrum resolves them, otherwise
// from the amplitude envelope at their shared frequency over the last
// beat_history_s (whole cycles, pitch/dsp/whole_cycles.h), and reported beside the
// rate the f0s predict, |q * f_high - p * f_low| (pitch/theory/beats.h).
//
// All allocation happens in the constructor; push() and pull() never
// allocate for blocks up to max_block_len_samples.
//
// Index:
//   1. Impl: buffers, set-up, the sample ring
//   2. Spectrum and peaks (phase-vocoder frequencies)
//   3. Salience, cancellation and the two voices
//   4. Least-squares refinement per voice
//   5. Interval, target and the coinciding pair
//   6. Beat rate: frequency difference or envelope cycles
//   7. Second stage: where each voice is now
//   8. Public API
#include "pitch/measure/two_voice.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/dsp/cancel_yin.h"
#include "pitch/dsp/real_fft.h"
#include "pitch/dsp/whole_cycles.h"
#include "pitch/theory/beats.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <complex>
#include <cstring>
#include <numeric>
#include <optional>
#include <string>
#include <vector>

namespace beatless::pitch {

namespace {
constexpr double kTwoPi = 6.283185307179586476925286766559;
constexpr std::size_t kMaxPeaks = 256;
constexpr int kMaxHarmonic = 32;
constexpr double kLobeBins = 4.0;  // Blackman-Harris main lobe half width
constexpr double kAlphaHz = 52.0;  // Klapuri 2006 weight g = (f0 + alpha) / (h f0 + beta) (from memory)
constexpr double kBetaHz = 320.0;

void check(bool ok, const char* what, double v) {
    if (!ok) throw Error("two voices: " + std::string(what) + " " + format_trimmed(v, 6) + " is out of range");
}

struct Peak {
    double freq_hz = 0.0;
    double amp = 0.0;       // linear amplitude of the sinusoid (1 = full-scale sine)
    double resid = 0.0;     // amplitude left after cancelling the first voice
    bool of_first = false;  // matched as a partial of the first voice
};

struct Voice {
    double f0_hz = 0.0;
    double salience = 0.0;
    std::array<int, kMaxHarmonic + 1> peak{};     // matched peak per harmonic, -1 when none
    std::array<bool, kMaxHarmonic + 1> shared{};  // within a main lobe of the other voice's partials
};
}  // namespace

// ---------------------------------------------------------------------------
// [SECTION] Impl: buffers, set-up, the sample ring
// ---------------------------------------------------------------------------
struct TwoVoiceTracker::Impl {
    TwoVoiceConfig cfg;
    TargetSet targets;
    std::size_t n = 0;     // FFT size
    std::size_t d = 0;     // offset of the second transform (n / 4)
    std::size_t span = 0;  // samples one frame depends on (n + d)
    std::size_t hop = 0;
    std::size_t kmax = 0;
    double bin_hz = 0.0;
    double amp_scale = 0.0;     // |X| -> sinusoid amplitude
    double window_power = 0.0;  // sum of the window's squares
    int harmonics = 0;
    AudibleRange audible;  // both voices sound `harmonics` partials; the 4 kHz limit or max_freq_hz if lower
    RealFft fft;
    std::vector<float> window;
    std::vector<float> ring;
    std::uint64_t written = 0;   // samples ever pushed
    std::uint64_t next_end = 0;  // one past the last sample of the next frame
    std::size_t bad = 0, dropped = 0;
    std::vector<float> x, in0, in1;
    std::vector<std::complex<float>> s0, s1;
    std::vector<double> power, scratch;
    std::vector<Peak> peaks;
    Voice va, vb;
    // Envelope of the coinciding partials (section 6).
    std::vector<double> env_win;
    std::size_t env_len = 0;
    int env_p = -1, env_q = -1;
    double env_ref_low_hz = 0.0;
    std::vector<double> hist_t, hist_m;
    std::size_t hist_n = 0;
    // The last pair told apart (section 3: names a merge into one series).
    double last_pair_t_s = -INFINITY;
    double last_pair_cents = NAN;
    // The second stage (section 7): where each voice of the pair is now.
    std::optional<CancelYin> cy;
    double fast_lo_hz = 0.0, fast_hi_hz = 0.0;  // 0: not following a pair
    double disagree_s = 0.0;                    // how long the stages have named different pairs
    double held_s = 0.0;                        // how far back from the newest sample the pair has held
    double since_change_s = INFINITY;           // since the second stage last saw a voice move by a step
    bool jump_pending = false;                  // the last frame's pair jumped from the one before
    bool stages_agree = false;                  // this frame's two stages name the same pair

    Impl(const TwoVoiceConfig& c, const TargetSet& set);
    void reset();
    void analyze(TwoVoiceFrame& f);
    void find_peaks();
    int match(double freq_hz, double tol_hz) const;
    double salience(double f0_hz, bool residual) const;
    void cancel_first();
    void refine(Voice& v, const Voice* other);
    void name_interval(TwoVoiceFrame& f) const;
    Blend blend_of(const TwoVoiceFrame& f) const;
    void measure_beat(TwoVoiceFrame& f);
    bool follow_pair(TwoVoiceFrame& f, bool slow_two);
    void follow_one(TwoVoiceFrame& f);
    void clear_history() {
        hist_n = 0;
        env_p = env_q = -1;
    }
};

TwoVoiceTracker::Impl::Impl(const TwoVoiceConfig& c, const TargetSet& set)
    : cfg(c), targets(set), fft([&] {
          check(c.sample_rate_hz >= 8000.0 && c.sample_rate_hz <= 192000.0, "sample rate (Hz)", c.sample_rate_hz);
          check(c.window_s >= 0.02 && c.window_s <= 1.0, "window_s", c.window_s);
          std::size_t size = RealFft::fast_size(static_cast<std::size_t>(std::ceil(c.window_s * c.sample_rate_hz)));
          while (size % 4 != 0) size = RealFft::fast_size(size + 1);
          return size;
      }()) {
    check(cfg.hop_s > 0.0 && cfg.hop_s <= 0.1, "hop_s", cfg.hop_s);
    check(cfg.f_min_hz >= 20.0 && cfg.f_min_hz < cfg.f_max_hz, "f_min_hz", cfg.f_min_hz);
    check(cfg.f_max_hz <= 0.2 * cfg.sample_rate_hz, "f_max_hz", cfg.f_max_hz);
    check(cfg.max_harmonic >= 2 && cfg.max_harmonic <= kMaxHarmonic, "max_harmonic", cfg.max_harmonic);
    check(cfg.max_freq_hz > cfg.f_max_hz, "max_freq_hz", cfg.max_freq_hz);
    check(cfg.peak_range_db >= 20.0 && cfg.peak_range_db <= 140.0, "peak_range_db", cfg.peak_range_db);
    check(cfg.beat_history_s >= 0.5 && cfg.beat_history_s <= 30.0, "beat_history_s", cfg.beat_history_s);
    check(cfg.octave_share > 0.0 && cfg.octave_share <= 1.0, "octave_share", cfg.octave_share);
    check(cfg.merge_memory_s >= 0.0 && cfg.merge_memory_s <= 5.0, "merge_memory_s", cfg.merge_memory_s);
    check(cfg.max_block_len_samples >= 1 && cfg.max_block_len_samples <= (1u << 24), "max_block_len_samples",
          static_cast<double>(cfg.max_block_len_samples));
    n = fft.size();
    d = n / 4;
    span = n + d;
    hop = std::max<std::size_t>(1, static_cast<std::size_t>(std::lround(cfg.hop_s * cfg.sample_rate_hz)));
    bin_hz = cfg.sample_rate_hz / static_cast<double>(n);
    kmax = std::min(n / 2 - 2, static_cast<std::size_t>(std::min(cfg.max_freq_hz, 0.45 * cfg.sample_rate_hz) / bin_hz));
    check(kLobeBins * 2.0 * bin_hz < cfg.f_min_hz, "f_min_hz for this window (partials must be resolved)",
          cfg.f_min_hz);
    harmonics = cfg.max_harmonic;
    audible.partials_a = harmonics;
    audible.partials_b = harmonics;
    audible.max_freq_hz = std::min(audible.max_freq_hz, cfg.max_freq_hz);
    window = make_window(WindowKind::blackman_harris, n);
    double wsum = 0.0;
    for (float w : window) wsum += w;
    amp_scale = 2.0 / wsum;
    for (float w : window) window_power += static_cast<double>(w) * w;
    ring.assign(span + cfg.max_block_len_samples + hop, 0.0f);
    x.assign(span, 0.0f);
    in0.assign(n, 0.0f);
    in1.assign(n, 0.0f);
    s0.assign(n / 2 + 1, {});
    s1.assign(n / 2 + 1, {});
    power.assign(kmax + 2, 0.0);
    scratch.assign(kmax + 2, 0.0);
    peaks.reserve(kMaxPeaks);
    env_win.assign(span, 0.0);
    const auto hist_cap =
        static_cast<std::size_t>(std::ceil(cfg.beat_history_s / (static_cast<double>(hop) / cfg.sample_rate_hz))) + 2;
    hist_t.assign(hist_cap, 0.0);
    hist_m.assign(hist_cap, 0.0);
    check(cfg.fast_window_s == 0.0 || (cfg.fast_window_s >= 0.005 && cfg.fast_window_s <= 0.1), "fast_window_s",
          cfg.fast_window_s);
    check(cfg.fast_aperiodicity > 0.0 && cfg.fast_aperiodicity <= 1.0, "fast_aperiodicity", cfg.fast_aperiodicity);
    check(cfg.fast_max_window_s == 0.0 || (cfg.fast_max_window_s >= 0.005 && cfg.fast_max_window_s <= 0.1),
          "fast_max_window_s", cfg.fast_max_window_s);
    if (cfg.fast_window_s > 0.0) {
        CancelYinConfig yc;
        yc.sample_rate_hz = cfg.sample_rate_hz;
        yc.window_s = cfg.fast_window_s;
        yc.max_window_s = std::max(cfg.fast_window_s, cfg.fast_max_window_s);
        yc.f_min_hz = cfg.f_min_hz;
        yc.f_max_hz = cfg.f_max_hz;
        cy.emplace(yc);
        check(cy->needed_samples(cfg.sample_rate_hz / cfg.f_min_hz, cfg.f_min_hz,
                                 cy->window_len_samples(static_cast<std::size_t>(1e9))) <= span,
              "fast_max_window_s", yc.max_window_s);
    }
    reset();
}

void TwoVoiceTracker::Impl::reset() {
    written = 0;
    next_end = span;
    bad = dropped = 0;
    last_pair_t_s = -INFINITY;
    last_pair_cents = NAN;
    fast_lo_hz = fast_hi_hz = 0.0;
    disagree_s = held_s = 0.0;
    since_change_s = INFINITY;
    jump_pending = false;
    clear_history();
}

// ---------------------------------------------------------------------------
// [SECTION] Spectrum and peaks (phase-vocoder frequencies)
// ---------------------------------------------------------------------------
void TwoVoiceTracker::Impl::find_peaks() {
    for (std::size_t i = 0; i < n; ++i) {
        in0[i] = window[i] * x[i];
        in1[i] = window[i] * x[i + d];
    }
    fft.forward(in0.data(), s0.data());
    fft.forward(in1.data(), s1.data());
    double pmax = 0.0;
    for (std::size_t k = 1; k <= kmax; ++k) {
        power[k] = std::norm(std::complex<double>(s0[k]));
        scratch[k] = power[k];
        pmax = std::max(pmax, power[k]);
    }
    std::nth_element(scratch.begin() + 1, scratch.begin() + 1 + kmax / 2, scratch.begin() + kmax + 1);
    const double floor_p = std::max(pmax * std::pow(10.0, -cfg.peak_range_db / 10.0), 16.0 * scratch[1 + kmax / 2]);
    peaks.clear();
    for (std::size_t k = 2; k < kmax && peaks.size() < kMaxPeaks; ++k) {
        if (!(power[k] > floor_p && power[k] > power[k - 1] && power[k] >= power[k + 1])) continue;
        std::complex<double> c{};
        for (std::size_t j = k - 1; j <= k + 1; ++j)
            c += std::complex<double>(s1[j]) * std::conj(std::complex<double>(s0[j]));
        // Phase advance over d samples, unwrapped around bin k (valid within 2 bins).
        const double expected = kTwoPi * static_cast<double>(k) * static_cast<double>(d) / static_cast<double>(n);
        const double dphi = std::remainder(std::arg(c) - expected, kTwoPi);
        const double fbin = static_cast<double>(k) + dphi * static_cast<double>(n) / (kTwoPi * static_cast<double>(d));
        Peak p;
        p.freq_hz = fbin * bin_hz;
        p.amp = std::sqrt(power[k]) * amp_scale;
        p.resid = p.amp;
        peaks.push_back(p);
    }
}

// Nearest peak to freq_hz within tol_hz, or -1 (peaks are sorted by frequency).
int TwoVoiceTracker::Impl::match(double freq_hz, double tol_hz) const {
    const auto it =
        std::lower_bound(peaks.begin(), peaks.end(), freq_hz, [](const Peak& p, double f) { return p.freq_hz < f; });
    int best = -1;
    double best_d = tol_hz;
    const auto i = static_cast<int>(it - peaks.begin());
    for (int j = std::max(0, i - 1); j <= std::min(static_cast<int>(peaks.size()) - 1, i); ++j) {
        const double dist = std::fabs(peaks[static_cast<std::size_t>(j)].freq_hz - freq_hz);
        if (dist <= best_d) {
            best_d = dist;
            best = j;
        }
    }
    return best;
}

// ---------------------------------------------------------------------------
// [SECTION] Salience, cancellation and the two voices
// ---------------------------------------------------------------------------
double TwoVoiceTracker::Impl::salience(double f0, bool residual) const {
    double s = 0.0;
    for (int h = 1; h <= harmonics; ++h) {
        const double f = h * f0;
        if (f > cfg.max_freq_hz) break;
        const int j = match(f, std::min(std::max(2.0 * bin_hz, 0.015 * f), 0.3 * f0));
        if (j < 0) continue;
        const Peak& p = peaks[static_cast<std::size_t>(j)];
        s += (f0 + kAlphaHz) / (h * f0 + kBetaHz) * (residual ? p.resid : p.amp);
    }
    return s;
}

// Cancels the first voice's partials down to a smooth envelope: a partial
// louder than both its neighbours in the series keeps the excess, which is
// the other voice's share of a coinciding partial.
void TwoVoiceTracker::Impl::cancel_first() {
    auto amp_of = [&](int h) {
        if (h < 1 || h > harmonics || va.peak[static_cast<std::size_t>(h)] < 0) return 0.0;
        return peaks[static_cast<std::size_t>(va.peak[static_cast<std::size_t>(h)])].amp;
    };
    for (int h = 1; h <= harmonics; ++h) {
        const int j = va.peak[static_cast<std::size_t>(h)];
        if (j < 0) continue;
        Peak& p = peaks[static_cast<std::size_t>(j)];
        const double below = h == 1 ? INFINITY : amp_of(h - 1);
        const double expected = std::min(p.amp, std::max(below, amp_of(h + 1)));
        p.resid = std::max(0.0, p.amp - expected);
        p.of_first = true;
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Least-squares refinement per voice
// ---------------------------------------------------------------------------
// Matches partials upward from the fundamental, updating f0 by weighted
// least squares (f_h = h f0, weights amp^2) over the partials that lie
// clear of the other voice's series; shared partials are marked, not used.
void TwoVoiceTracker::Impl::refine(Voice& v, const Voice* other) {
    double swf = 0.0, sw = 0.0;
    double f0 = v.f0_hz;
    const double lobe_hz = (kLobeBins + 1.0) * bin_hz;
    for (int h = 1; h <= kMaxHarmonic; ++h) {
        v.peak[static_cast<std::size_t>(h)] = -1;
        v.shared[static_cast<std::size_t>(h)] = false;
    }
    for (int h = 1; h <= harmonics; ++h) {
        const double f = h * f0;
        if (f > cfg.max_freq_hz) break;
        const int j = match(f, std::min(std::max(1.5 * bin_hz, 0.006 * f), 0.3 * f0));
        const auto hs = static_cast<std::size_t>(h);
        v.peak[hs] = j;
        if (j < 0) continue;
        bool shared = false;
        if (other && other->f0_hz > 0.0) {
            const double m = std::round(f / other->f0_hz);
            shared = m >= 1.0 && std::fabs(f - m * other->f0_hz) < lobe_hz;
        }
        v.shared[hs] = shared;
        if (shared) continue;
        const Peak& p = peaks[static_cast<std::size_t>(j)];
        const double w = p.amp * p.amp;
        swf += w * h * p.freq_hz;
        sw += w * h * h;
        f0 = swf / sw;
    }
    if (sw > 0.0) v.f0_hz = swf / sw;
}

void TwoVoiceTracker::Impl::analyze(TwoVoiceFrame& f) {
    // The level as the analysis sees it: weighted by the window, so a note's
    // last milliseconds at the window's edge (where it is nearly zero) are
    // silence, not a frame of sidelobes.
    double ss = 0.0;
    for (std::size_t i = 0; i < n; ++i) {
        const double a = static_cast<double>(window[i]) * x[i + d], b = static_cast<double>(window[i]) * x[i];
        ss += 0.5 * (a * a + b * b);
    }
    // And the newest 20 ms: a sound that has stopped is silence at once,
    // not 85 ms later when the window's centre passes its end.
    const std::size_t tail = std::min(span, static_cast<std::size_t>(0.02 * cfg.sample_rate_hz));
    double st = 0.0;
    for (std::size_t i = span - tail; i < span; ++i) st += static_cast<double>(x[i]) * x[i];
    const double floor = std::pow(10.0, cfg.silence_dbfs / 20.0);
    if (!(std::sqrt(ss / window_power) > floor) || !(std::sqrt(st / static_cast<double>(tail)) > floor)) {
        clear_history();
        fast_lo_hz = fast_hi_hz = 0.0;
        return;
    }
    find_peaks();
    if (peaks.empty()) {
        clear_history();
        fast_lo_hz = fast_hi_hz = 0.0;
        return;
    }
    // The first voice: the most salient peak as a fundamental.
    va = Voice{};
    for (const Peak& p : peaks) {
        if (p.freq_hz < cfg.f_min_hz || p.freq_hz > cfg.f_max_hz) continue;
        const double s = salience(p.freq_hz, false);
        if (s > va.salience) {
            va.salience = s;
            va.f0_hz = p.freq_hz;
        }
    }
    if (va.f0_hz <= 0.0) {
        clear_history();
        fast_lo_hz = fast_hi_hz = 0.0;
        return;
    }
    refine(va, nullptr);
    cancel_first();
    // The second voice: the most salient of what the first leaves.
    vb = Voice{};
    for (const Peak& p : peaks) {
        if (p.of_first || p.freq_hz < cfg.f_min_hz || p.freq_hz > cfg.f_max_hz) continue;
        if (std::fabs(1200.0 * std::log2(p.freq_hz / va.f0_hz)) < 50.0) continue;
        const double s = salience(p.freq_hz, true);
        if (s > vb.salience) {
            vb.salience = s;
            vb.f0_hz = p.freq_hz;
        }
    }
    const bool two = vb.f0_hz > 0.0 && vb.salience >= cfg.min_second_salience * va.salience;
    if (two) {
        for (int pass = 0; pass < 2; ++pass) {
            refine(vb, &va);
            refine(va, &vb);
        }
    }
    // Confidence: share of the peak power explained by the series found.
    double all = 0.0, explained = 0.0;
    for (std::size_t i = 0; i < peaks.size(); ++i) {
        const double pw = peaks[i].amp * peaks[i].amp;
        all += pw;
        bool used = false;
        for (int h = 1; h <= harmonics && !used; ++h) {
            const auto hs = static_cast<std::size_t>(h);
            used = va.peak[hs] == static_cast<int>(i) || (two && vb.peak[hs] == static_cast<int>(i));
        }
        if (used) explained += pw;
    }
    f.confidence = all > 0.0 ? explained / all : 0.0;
    auto level_db = [&](const Voice& v) {
        return v.peak[1] >= 0 ? 20.0 * std::log10(peaks[static_cast<std::size_t>(v.peak[1])].amp) : -INFINITY;
    };
    if (!two) {
        // The slow stage's window may still hold the last pair and the next note mixed: a pair the second
        // stage still finds in the newest audio goes on.
        if (follow_pair(f, false)) {
            f.voices = 2;
            f.interval_cents = 1200.0 * std::log2(f.f_high_hz / f.f_low_hz);
            name_interval(f);
            clear_history();
            return;
        }
        f.voices = 1;
        f.f_low_hz = va.f0_hz;
        f.level_low_db = level_db(va);
        f.blend = blend_of(f);
        follow_one(f);
        clear_history();
        return;
    }
    if (vb.f0_hz < va.f0_hz) std::swap(va, vb);
    f.voices = 2;
    f.f_low_hz = va.f0_hz;
    f.f_high_hz = vb.f0_hz;
    f.level_low_db = level_db(va);
    f.level_high_db = level_db(vb);
    const bool fast = follow_pair(f, true);
    f.interval_cents = 1200.0 * std::log2(f.f_high_hz / f.f_low_hz);
    last_pair_t_s = f.t_s;
    last_pair_cents = f.interval_cents;
    name_interval(f);
    // The partials the beat is measured from are the slow stage's: while the stages name different pairs (a
    // note change inside its window) they are not this pair's, and nothing is measured. Once they name the same
    // pair the envelope (the newest 15-150 ms) is this pair's, though the second stage's f0s still stand.
    if (fast && !stages_agree)
        clear_history();
    else
        measure_beat(f);
}

// ---------------------------------------------------------------------------
// [SECTION] Second stage: where each voice is now
// ---------------------------------------------------------------------------
// Each voice by YIN over the newest fast_window_s with the other voice cancelled at its period (cancel_yin.h):
// the high voice above the low one, then the low voice below the high one, then the high voice again when the
// low one moved. A voice that leaves no periodic rest (a single note: cancelling it leaves noise) ends the pair.
// The slow stage keeps the choice of the pair: the second stage seeds from it, and gives way when the two have
// named different pairs for longer than the slow window.
bool TwoVoiceTracker::Impl::follow_pair(TwoVoiceFrame& f, bool slow_two) {
    stages_agree = false;
    if (!cy) return false;
    const double fs = cfg.sample_rate_hz;
    if (slow_two && fast_lo_hz <= 0.0) {
        fast_lo_hz = va.f0_hz;
        fast_hi_hz = vb.f0_hz;
        disagree_s = 0.0;
    }
    if (fast_lo_hz <= 0.0) return false;
    const double apart = std::exp2(50.0 / 1200.0);  // closer pairs are the slow stage's unisons
    // The high voice's residue is low-passed at 6 times the lowest f0 searched (at least the highest one): a weak
    // voice's partials fall fast (a bowed string's as 1/h^2, Cremer 1984), and white noise above them weighs on
    // YIN's difference function (measured on the duo bench: at 20 dB SNR with the upper voice 20 dB down, 5 kHz
    // gave a median error of 5.4 c over 20 ms, 1.2-1.5 kHz 2.0 c). The low voice, the louder one in double stops,
    // keeps the configured low-pass: its upper partials carry its period where clipping or noise blur the
    // lowest.
    const auto voice = [&](double cancel_hz, double lo_hz, double hi_hz, double lowpass_hz, std::size_t window) {
        const CancelYinResult r = cy->estimate(x.data(), span, fs / cancel_hz, lo_hz, hi_hz, lowpass_hz, window);
        return r.f0_hz > 0.0 && r.aperiodicity <= cfg.fast_aperiodicity ? r.f0_hz : 0.0;
    };
    constexpr double kLowpassPartials = 6.0;
    const auto high_voice = [&](double cancel_hz, double lo_hz, double hi_hz) {
        return voice(cancel_hz, lo_hz, hi_hz, kLowpassPartials * lo_hz, 0);
    };
    const auto low_voice = [&](double cancel_hz, double lo_hz, double hi_hz) {
        return voice(cancel_hz, lo_hz, hi_hz, 0.0, 0);
    };
    double hi = high_voice(fast_lo_hz, fast_lo_hz * apart, cfg.f_max_hz);
    // The low voice near where it was (a minor third either way), else anywhere below the high one.
    const double third = std::exp2(300.0 / 1200.0);
    double lo = hi > 0.0 ? low_voice(hi, fast_lo_hz / third, std::min(fast_lo_hz * third, hi / apart)) : 0.0;
    if (hi > 0.0 && lo <= 0.0) lo = low_voice(hi, cfg.f_min_hz, hi / apart);
    if (lo > 0.0 && std::fabs(1200.0 * std::log2(lo / fast_lo_hz)) > 5.0) hi = high_voice(lo, lo * apart, cfg.f_max_hz);
    if (lo <= 0.0 || hi <= 0.0) {
        fast_lo_hz = fast_hi_hz = 0.0;
        held_s = 0.0;
        return false;
    }
    // While the pair holds (neither voice moved more than kHeldCents since the last frame: a vibrato of +-10 c at
    // 5.5 Hz moves 3.5 c per 10 ms), the high voice again over as much of the newest audio as the pair has held,
    // up to fast_max_window_s: the noise on a weak voice's period falls with the window (for a sinusoid its
    // variance as N^-3, D. C. Rife and R. R. Boorstyn, IEEE Trans. Inf. Theory 20(5), 1974). A pair that has just
    // appeared is taken to reach back half the short window's span. Up to 60 ms by default: with 40 ms a weak
    // upper voice (20 dB down, +-10 c vibrato, 20 dB SNR) read within 5 c of a new interval (five frames in a row)
    // only after 83 ms on the duo bench; with 60 ms every case there does so after 33 ms.
    constexpr double kHeldCents = 25.0;
    const double hop_s = static_cast<double>(hop) / fs;
    const auto cents = [](double a, double b) { return std::fabs(1200.0 * std::log2(a / b)); };
    const std::size_t w_short = cy->window_len_samples();
    const bool held = fast_hi_hz > 0.0 && cents(hi, fast_hi_hz) <= kHeldCents && cents(lo, fast_lo_hz) <= kHeldCents;
    // A step: a voice moved by more than fast_agree_cents since the last frame, and the next frame holds the new
    // pair (one frame off alone is noise, and the slow stage's f0s go on standing).
    const bool jumped = fast_hi_hz > 0.0 &&
                        (cents(hi, fast_hi_hz) > cfg.fast_agree_cents || cents(lo, fast_lo_hz) > cfg.fast_agree_cents);
    since_change_s = held && jump_pending ? hop_s : since_change_s + hop_s;
    jump_pending = jumped;
    held_s = held && held_s > 0.0 ? held_s + hop_s : 0.5 * (static_cast<double>(w_short) / fs + 1.0 / lo + 1.0 / hi);
    std::size_t w_used = w_short;
    const double room_s = held_s - 1.0 / lo - 1.0 / hi;
    const std::size_t w_long = room_s > 0.0 ? cy->window_len_samples(static_cast<std::size_t>(room_s * fs)) : 0;
    if (held && w_long > w_short) {
        const double semitone = std::exp2(100.0 / 1200.0);
        const double h2 =
            voice(lo, std::max(lo * apart, hi / semitone), hi * semitone, kLowpassPartials * lo * apart, w_long);
        if (h2 > 0.0 && cents(h2, hi) <= kHeldCents) {
            hi = h2;
            w_used = w_long;
        }
    }
    fast_lo_hz = lo;
    fast_hi_hz = hi;
    const auto near = [](double a, double b) { return std::fabs(1200.0 * std::log2(a / b)) <= 35.0; };
    disagree_s = slow_two && near(lo, va.f0_hz) && near(hi, vb.f0_hz) ? 0.0 : disagree_s + hop_s;
    if (disagree_s > static_cast<double>(span) / fs + 0.05) {
        fast_lo_hz = fast_hi_hz = 0.0;
        held_s = 0.0;
        return false;
    }
    // Where both stages agree within fast_agree_cents the slow stage's f0s stand (finer in noise: whole partials
    // over 170 ms); the second stage's say where the voices are when a note has changed inside that window.
    const auto within = [&](double a, double b) {
        return std::fabs(1200.0 * std::log2(a / b)) <= cfg.fast_agree_cents;
    };
    // But not while the slow window still holds a step the second stage saw: its peaks then mix both notes (the
    // window's oldest quarter weighs under 0.1 % in power, so three quarters of the span after the step will do).
    const bool slow_clean = since_change_s > 0.75 * static_cast<double>(span) / fs;
    stages_agree = slow_two && within(lo, va.f0_hz) && within(hi, vb.f0_hz);
    if (stages_agree && slow_clean) return false;
    f.f_low_hz = lo;
    f.f_high_hz = hi;
    f.fast = true;
    f.span_s = (static_cast<double>(w_used) + fs / lo + fs / hi) / fs;
    return true;
}

// One voice: its f0 now, by YIN over the newest window within a semitone of the slow stage's.
void TwoVoiceTracker::Impl::follow_one(TwoVoiceFrame& f) {
    if (!cy) return;
    const double fs = cfg.sample_rate_hz, semitone = std::exp2(100.0 / 1200.0);
    const CancelYinResult r = cy->estimate(x.data(), span, 0.0, f.f_low_hz / semitone, f.f_low_hz * semitone);
    if (r.f0_hz <= 0.0 || r.aperiodicity > cfg.fast_aperiodicity) return;
    f.f_low_hz = r.f0_hz;
    f.fast = true;
    f.span_s = (static_cast<double>(cy->window_len_samples()) + fs / r.f0_hz) / fs;
}

// One series heard: why two voices may hide in it. An octave whose upper
// voice's partials all land on the lower's even ones leaves those louder than
// their odd neighbours, so after cancelling the first voice down to a smooth
// envelope the even partials keep a salience of their own at 2 f0; a pair seen
// just before near a unison or an octave names the merge too. Else: one series.
Blend TwoVoiceTracker::Impl::blend_of(const TwoVoiceFrame& f) const {
    if (salience(2.0 * va.f0_hz, true) >= cfg.octave_share * va.salience) return Blend::octave;
    if (f.t_s - last_pair_t_s <= cfg.merge_memory_s && std::isfinite(last_pair_cents)) {
        if (std::fabs(last_pair_cents) < 100.0) return Blend::near_unison;
        const double octs = std::round(last_pair_cents / 1200.0);
        if (octs >= 1.0 && std::fabs(last_pair_cents - 1200.0 * octs) < 30.0) return Blend::octave;
    }
    return Blend::one_series;
}

// ---------------------------------------------------------------------------
// [SECTION] Interval, target and the coinciding pair
// ---------------------------------------------------------------------------
void TwoVoiceTracker::Impl::name_interval(TwoVoiceFrame& f) const {
    Ratio r{1, 1};
    if (!targets.targets.empty()) {
        const TargetMatch m = nearest_target(targets, f.interval_cents, cfg.octave_equivalent);
        f.target_index = static_cast<int>(m.index);
        f.target_octaves = m.octaves;
        f.target_cents = m.target_cents;
        f.dev_cents = m.dev_cents;
        r = beating_ratio(targets.targets[m.index].interval, m.octaves);
    } else {
        r = beating_ratio(Interval::from_cents(f.interval_cents), 0);
        f.target_cents = r.cents();
        f.dev_cents = f.interval_cents - f.target_cents;
    }
    f.ratio_num = r.num;
    f.ratio_den = r.den;
    // The pair a listener hears (pitch/theory/beats.h, audible_pair): the ratio's
    // own pair (the num-th partial of the low voice meets the den-th of the
    // high one) when both voices sound it below the limit, else a simpler
    // ratio's; none leaves partial_* at -1 and no beat is predicted.
    const bool cents_target =
        !targets.targets.empty() && !targets.targets[static_cast<std::size_t>(f.target_index)].interval.is_ratio();
    const AudiblePair h = audible_pair(f.f_low_hz, f.f_high_hz, f.target_cents,
                                       cents_target ? std::nullopt : std::optional<Ratio>(r), audible);
    f.partial_low = h.found ? h.partial_a : -1;
    f.partial_high = h.found ? h.partial_b : -1;
    f.predicted_beat_hz = h.beat_hz;
}

// ---------------------------------------------------------------------------
// [SECTION] Beat rate: frequency difference or envelope cycles
// ---------------------------------------------------------------------------
void TwoVoiceTracker::Impl::measure_beat(TwoVoiceFrame& f) {
    const int p = f.partial_low, q = f.partial_high;
    const double fc = 0.5 * (p * f.f_low_hz + q * f.f_high_hz);
    if (p < 1 || q < 1 || p > harmonics || q > harmonics || fc > cfg.max_freq_hz) {
        clear_history();
        return;
    }
    const int jp = va.peak[static_cast<std::size_t>(p)], jq = vb.peak[static_cast<std::size_t>(q)];
    // Neither voice's partial is a peak in this frame. At the null of a deep
    // beat (two equally strong partials) the shared peak vanishes for a
    // moment: a history of the same pair goes on through it, since the null
    // is part of the envelope being measured. Otherwise nothing can beat.
    const bool same_pair = hist_n > 0 && p == env_p && q == env_q;
    if (jp < 0 && jq < 0 && !same_pair) {
        clear_history();
        return;
    }
    // Resolved: two separate peaks, each well outside the other's main lobe.
    if (jp >= 0 && jq >= 0 && jp != jq) {
        const double diff =
            std::fabs(peaks[static_cast<std::size_t>(jp)].freq_hz - peaks[static_cast<std::size_t>(jq)].freq_hz);
        if (diff > 2.0 * kLobeBins * bin_hz) {
            f.measured_beat_hz = diff;
            f.beat_source = BeatSource::frequency_difference;
            clear_history();
            return;
        }
    }
    // Unresolved: follow the amplitude at fc. A new pair, or a voice that
    // moved, starts a new history (and a demodulation window that passes
    // both partials but not the series' neighbours, f_low away).
    const bool moved = env_ref_low_hz <= 0.0 || std::fabs(1200.0 * std::log2(f.f_low_hz / env_ref_low_hz)) > 25.0;
    if (p != env_p || q != env_q || moved) {
        hist_n = 0;
        env_p = p;
        env_q = q;
        env_ref_low_hz = f.f_low_hz;
        const double len = std::clamp(8.0 / f.f_low_hz, 0.015, 0.15) * cfg.sample_rate_hz;
        env_len = std::min(span, static_cast<std::size_t>(len));
        for (std::size_t i = 0; i < env_len; ++i) env_win[i] = window_value(WindowKind::blackman_harris, i, env_len);
    }
    // Complex demodulation at fc over the newest env_len samples.
    const double w = -kTwoPi * fc / cfg.sample_rate_hz;
    const std::complex<double> rot(std::cos(w), std::sin(w));
    std::complex<double> ph(1.0, 0.0), z{};
    const std::size_t base = span - env_len;
    for (std::size_t i = 0; i < env_len; ++i) {
        z += env_win[i] * static_cast<double>(x[base + i]) * ph;
        ph *= rot;
        if ((i & 1023) == 1023) ph /= std::abs(ph);
    }
    const double t_env = (static_cast<double>(next_end) - 0.5 * static_cast<double>(env_len)) / cfg.sample_rate_hz;
    if (hist_n == hist_t.size()) {
        std::memmove(hist_t.data(), hist_t.data() + 1, (hist_n - 1) * sizeof(double));
        std::memmove(hist_m.data(), hist_m.data() + 1, (hist_n - 1) * sizeof(double));
        --hist_n;
    }
    hist_t[hist_n] = t_env;
    hist_m[hist_n] = std::abs(z);
    ++hist_n;

    double mean = 0.0, sd = 0.0;
    mean_and_spread(hist_m.data(), hist_n, mean, sd);
    const double hop_s = static_cast<double>(hop) / cfg.sample_rate_hz;
    CycleConfig cc;
    cc.min_rate_hz = 1.0 / cfg.beat_history_s;
    cc.max_rate_hz = 0.35 / hop_s;
    cc.hysteresis_abs = 0.03 * mean;
    cc.hysteresis_rel = 0.25;
    const CycleStats cs = find_cycles(hist_t.data(), hist_m.data(), hist_n, cc);
    const double held_s = hist_t[hist_n - 1] - hist_t[0];
    if (cs.found && (cs.cycles >= 2 || cs.t_last_s - cs.t_first_s >= 0.35 * cfg.beat_history_s)) {
        f.measured_beat_hz = cs.rate_hz;
        f.beat_source = BeatSource::envelope;
    } else if (held_s >= 0.9 * cfg.beat_history_s) {
        f.measured_beat_hz = 0.0;
        f.beat_source = BeatSource::slower_than_history;
    }
    // A bow change, a note start or a burst of noise also moves the envelope: an envelope rate far from what the
    // pitches predict (more than 0.3 Hz and 30 %, common practice) is not this pair's beat, and is not reported.
    const double pr = f.predicted_beat_hz;
    if (f.beat_source == BeatSource::envelope && std::isfinite(pr) &&
        std::fabs(f.measured_beat_hz - pr) > std::max(0.3, 0.3 * pr)) {
        f.measured_beat_hz = NAN;
        f.beat_source = BeatSource::none;
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Public API
// ---------------------------------------------------------------------------
TwoVoiceTracker::TwoVoiceTracker(const TwoVoiceConfig& config, const TargetSet& targets)
    : impl_(std::make_unique<Impl>(config, targets)) {}
TwoVoiceTracker::~TwoVoiceTracker() = default;
TwoVoiceTracker::TwoVoiceTracker(TwoVoiceTracker&&) noexcept = default;
TwoVoiceTracker& TwoVoiceTracker::operator=(TwoVoiceTracker&&) noexcept = default;

void TwoVoiceTracker::push(std::span<const float> samples) noexcept {
    Impl& m = *impl_;
    const std::size_t cap = m.ring.size();
    std::size_t i = 0;
    while (i < samples.size()) {
        // Keep the oldest sample the next frame needs: skip frames if full.
        while (m.written + 1 > (m.next_end - m.span) + cap) {
            m.next_end += m.hop;
            m.dropped += m.hop;
        }
        const std::uint64_t room = (m.next_end - m.span) + cap - m.written;
        const std::size_t pos = static_cast<std::size_t>(m.written % cap);
        const std::size_t take = std::min({samples.size() - i, cap - pos, static_cast<std::size_t>(room)});
        float* dst = m.ring.data() + pos;
        for (std::size_t j = 0; j < take; ++j) {
            float v = samples[i + j];
            if (!std::isfinite(v)) {
                v = 0.0f;
                ++m.bad;
            }
            dst[j] = v;
        }
        m.written += take;
        i += take;
    }
}

bool TwoVoiceTracker::pull(TwoVoiceFrame& out) noexcept {
    Impl& m = *impl_;
    if (m.written < m.next_end) return false;
    const std::size_t cap = m.ring.size();
    const std::uint64_t start = m.next_end - m.span;
    const auto pos = static_cast<std::size_t>(start % cap);
    const std::size_t first = std::min(m.span, cap - pos);
    std::memcpy(m.x.data(), m.ring.data() + pos, first * sizeof(float));
    std::memcpy(m.x.data() + first, m.ring.data(), (m.span - first) * sizeof(float));
    out = TwoVoiceFrame{};
    const double fs = m.cfg.sample_rate_hz;
    out.end_s = static_cast<double>(m.next_end - 1) / fs;
    out.span_s = static_cast<double>(m.span) / fs;
    // The centre of the long window, whose pair and steady values the frame carries (segments and the Review
    // screen place notes by it); end_s says when the reading was available (a short-stage frame's latency).
    out.t_s = (static_cast<double>(start) + 0.5 * static_cast<double>(m.span - 1)) / fs;
    for (std::size_t i = m.span - std::min(m.span, m.hop); i < m.span && !out.clipped; ++i)
        out.clipped = std::fabs(m.x[i]) >= 0.999f;
    m.analyze(out);
    m.next_end += m.hop;
    return true;
}

void TwoVoiceTracker::reset() noexcept { impl_->reset(); }
const TwoVoiceConfig& TwoVoiceTracker::config() const noexcept { return impl_->cfg; }
std::size_t TwoVoiceTracker::window_len_samples() const noexcept { return impl_->n; }
std::size_t TwoVoiceTracker::hop_len_samples() const noexcept { return impl_->hop; }
std::size_t TwoVoiceTracker::bad_samples() const noexcept { return impl_->bad; }
std::size_t TwoVoiceTracker::dropped_samples() const noexcept { return impl_->dropped; }

}  // namespace beatless::pitch
