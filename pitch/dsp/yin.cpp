// YinTracker: the streaming pipeline around the YIN steps and the refinement.
//
// Index
//   1. Geometry     — rates, hop, blocks, span and frame positions (constructor)
//   2. Input        — push(): sanitising, buffers, decimation
//   3. Coarse frame — YIN steps 2-5 on the decimated copy
//   4. Final frame  — step 6 (best local estimate), period-multiple refinement
//   5. Vibrato correction — the span's averaging of a moving f0, removed
//
// Time line (all indices absolute, sample n of the input at n / rate):
// frame f is centred on sample c_f = c_0 + f * hop. Its coarse window (k
// blocks of P decimated samples) and lag range are centred on c_f; its
// refinement span (at most span_s) is centred on c_f too, and t_s is the
// exact centre of the samples the refined lag compares. Where a note changes
// inside the span, the refinement keeps to the stretch periodic at the newest
// note's period (pitch/dsp/periodic_run.h), and t_s is that stretch's centre:
// frames stay in time order (deliver()). A frame is finished
// once the coarse result of frame f + 1 exists (step 6 looks at both
// neighbours), which sets delay_s().
#include "pitch/dsp/yin.h"

#include "pitch/base/error.h"
#include "pitch/dsp/decimator.h"
#include "pitch/dsp/periodic_run.h"
#include "pitch/dsp/vec_ops.h"
#include "pitch/dsp/yin_coarse.h"
#include "pitch/dsp/yin_path.h"
#include "pitch/dsp/yin_refine.h"
#include "pitch/dsp/yin_voicing.h"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdint>
#include <sstream>
#include <string>
#include <vector>

namespace beatless::pitch {

namespace {

using Index = std::int64_t;

constexpr std::size_t kChunk = 4096;               // input processed in pieces of this many samples
constexpr double kMinDecimatedRate = 5000.0;       // the coarse stage runs at or above this rate
constexpr double kSamplesPerShortestPeriod = 6.5;  // ... and at least this many samples per period of f_max
constexpr double kCoarseLagError = 0.3;            // assumed parabola error on the coarse d, decimated samples
constexpr double kRunLagError = 0.5;      // assumed error of a neighbour's coarse period used alone, decimated samples
constexpr double kNewestThreshold = 0.1;  // YIN threshold for the newest note's period (stricter than the frame's)
constexpr double kRunFloor = 0.45;        // aperiodicity a block of a periodic stretch may always have (45 %)
// A frame left unvoiced within this many frames of the last voiced one may still be a change between notes (the
// frames just after a change hold both notes in their span).
constexpr Index kChangeGapFrames = 3;
// The newest note's stretch found from the span's end (newest_stretch(), in clean conditions only: one of the last 8
// voiced frames under kCleanAperiodicity): its blocks held under this aperiodicity, and the whole stretch under
// kNewestRunAperiodicity. Stricter than kRunFloor: a lag 10-20 % off a harmonic voice's period still measures
// 0.2-0.45 on it.
constexpr double kNewestRunFloor = 0.15;
constexpr double kNewestRunAperiodicity = 0.05;
// White noise at 20 dB SNR leaves a tone's d' near 0.01 (its share of the power, twice over in d); at 10 dB near 0.1,
// where short stretches of the noise itself can measure under kNewestRunAperiodicity.
constexpr double kCleanAperiodicity = 0.02;
// ... and only for a change of note: a period this far (3 %, half a semitone) from the last voiced frame's, and
// kVibratoReach further for each hop between them (a vibrato of +-100 c at 7.5 Hz moves the period 1.4 % in a hop).
constexpr double kStepReach = 0.03;
constexpr double kVibratoReach = 0.015;
// Fastest sweep of log f0 the periodic-stretch test follows, 1/s: a vibrato of
// +-100 cents at 7.5 Hz sweeps 2 pi 7.5 Hz x 100 / 1731 = 2.7 per second.
constexpr double kMaxSweep = 3.5;
// Coarse periods of neighbouring frames further apart than this are a note
// change in view (a vibrato moves them by under 3 % in two hops), as is an
// aperiodicity over twice the others'.
constexpr double kSteadyRatio = 1.03;
constexpr Index kFineMargin = LagRefiner::kKernelHalf + LagRefiner::kSearch + 1;
// One half of the span 40 dB under the other: a note starts or stops inside
// it (a held tone's level never changes that fast).
constexpr double kOneSidedRatio = 1e-4;
// Largest averaging bias the vibrato correction removes (log units, 20 cents):
// a vibrato of +-100 cents at 8 Hz over a 50 ms span is biased about 12 cents;
// anything larger is a note change inside the neighbours' spans.
constexpr double kMaxVibratoBias = 20.0 / 1200.0 * 0.6931471805599453;
// A vibrato's bias may change this much (3 cents) from one frame to the next
// (12 cents at 8 Hz changes by up to 2 pi 8 Hz 5 ms = 0.25 of itself per hop).
constexpr double kSmallBias = 3.0 / 1200.0 * 0.6931471805599453;
// The curvature is measured across frames f - k, f, f + k: wider than
// neighbours, so the estimates' noise, divided by (k hop)^2, stays far under a
// vibrato's curvature, while a vibrato at 8 Hz loses under 5 % of it.
constexpr std::size_t kStencil = 3;
constexpr double kPowerAlpha = 0.08;  // running mean of the curvature's square, weight of each frame
constexpr double kNoiseBias = 0.3 / 1200.0 * 0.6931471805599453;  // the curvature's noise, as a bias (0.3 cents)
// The curvature's noise is also measured: half the running mean square of its change between frames (for independent
// noise the change has twice the noise's variance; a vibrato's curvature changes by a sixth of itself per hop at
// 5 Hz). Detuned voices of a section beat, and their estimates wander with it: the correction backs off.
constexpr double kChangeShare = 0.5;
// The correction runs only while the running RMS slope of log f0 across the stencil is at least this (100 cents per
// second, as natural-log units): a vibrato of +-15 c at 4.5 Hz has an RMS slope of 300 c/s, a glide 100 c/s and
// more, while a steady low string at 10 dB SNR shows under 50 c/s of noise (estimates 1 c apart, 30 ms).
constexpr double kMinSlope = 100.0 / 1200.0 * 0.6931471805599453;
// Weight of each frame in the running mean of the slope's square between consecutive frames (steady_tone()).
constexpr double kSlopeAlpha = 0.2;
constexpr Index kSlopeFrames = 4;
// A stream starts as a moving pitch (four times kMinSlope's square) until its slope shows it steady: the flat window
// on a vibrato's first frames would leave its peaks flatter than the correction assumes.
constexpr double kStartSlopePower = 4.0 * kMinSlope * kMinSlope;  // ... the slope taken across this many hops
// Periods of this many full-rate samples and more are refined with the wide lag kernel (yin_refine.h), which damps
// the noise-times-noise part of d; its Gaussian (sigma 2 lags) halves a partial's curvature in d at about 10 lags per
// period, so shorter periods keep the narrow kernel (100 samples: 441 Hz at 44.1 kHz).
constexpr double kWideKernelLag = 100.0;
// Continuity (continuing()): the last voiced frame counts for this many frames; its period is searched within this
// share either side (a vibrato of +-100 c at 7.5 Hz moves the period 2.7 % in two 5 ms hops), and a dip there is kept
// when at most kContinuityRatio d' + kContinuityTolerance deep (twice the divisor test's allowance: the continuing
// pitch is evidence of its own).
constexpr Index kContinuityFrames = 2;
constexpr double kContinuityReach = 0.04;
constexpr double kContinuityRatio = 2.0;
constexpr double kContinuityTolerance = 0.1;
// A frame this far above the noise floor (dB) is voiced only under YIN's threshold as well.
constexpr double kClearAboveFloorDb = 20.0;
// Recent notes (remember_note()): a period held for kNoteFrames voiced frames, each within kNoteReach of the note's
// running period, is a note; after it changes, its reverberation may ring on for up to kRingS (a hall's RT60).
constexpr Index kNoteFrames = 8;
constexpr double kNoteReach = 0.05;
constexpr Index kNoteGapFrames = 10;
constexpr double kRingS = 1.5;

std::string num(double v) {
    std::ostringstream s;
    s << v;
    return s.str();
}

[[noreturn]] void bad(const std::string& what) { throw Error("YIN: " + what); }

Index floor_div(Index a, Index b) { return a >= 0 ? a / b : -((-a + b - 1) / b); }

}  // namespace

// ---------------------------------------------------------------------------
// [SECTION] Geometry
// ---------------------------------------------------------------------------

struct YinTracker::Impl {
    struct Coarse {
        double period_dec = 0.0;    // decimated samples (fractional, step 5)
        double aperiodicity = 1.0;  // d' at the chosen lag
        std::vector<double> d, dn;
    };

    YinConfig cfg;
    double rate = 0.0;
    std::size_t dec_factor = 1;
    double rate_dec = 0.0;
    std::size_t hop = 0;    // full-rate samples
    std::size_t block = 0;  // P, decimated samples
    std::size_t blocks_per_hop = 1;
    std::size_t blocks_per_window = 1;
    std::size_t window_dec = 0;   // coarse window, decimated samples
    std::size_t max_lag_dec = 0;  // coarse lags 0 .. max_lag_dec
    std::size_t lag_min = 0, lag_max = 0;
    Index span = 0;         // refinement span, full-rate samples
    Index c0 = 0;           // centre of frame 0
    Index a0 = 0;           // first decimated sample of frame 0's coarse window
    Index x_lookahead = 0;  // frame f needs x up to c_f + x_lookahead (exclusive)
    Index y_lookahead = 0;  // and y up to c_f / D + y_lookahead
    double delay = 0.0;

    Decimator decimator;
    BlockCorrelator correlator;
    LagRefiner fine;       // at the full rate, periods of kWideKernelLag samples and more (the wide kernel)
    LagRefiner fine_high;  // ... shorter periods (the narrow kernel: the wide one would damp their upper partials)
    LagRefiner mid;
    NoiseFloor noise_floor;
    PeriodicRun runs;
    double last_run_aperiodicity = 1.0;           // of the stretch periodic_stretch() chose last
    double last_run_period = 0.0;                 // ... and its period, decimated samples
    double last_t_s = -1.0;                       // t of the last frame delivered
    bool last_voiced = false;                     // ... and whether it was voiced
    bool last_restricted = false;                 // the last voiced frame used a stretch of its span
    std::array<double, 8> recent_aperiodicity{};  // d' of the last voiced frames (a ring)
    std::size_t recent_aperiodicity_next = 0;     // ... its next slot
    Index change_at = -1;                         // where the newest note's stretch began, full-rate samples
    double last_period_dec = 0.0;                 // period of the last voiced frame, decimated samples (0: none yet)
    Index last_voiced_f = -1;                     // ... and its frame
    std::array<double, 4> recent_f0{};            // f0 of the last voiced frames, by frame number modulo kSlopeFrames
    Index recent_run = 0;                         // voiced frames in a row up to the last
    double slope_power = kStartSlopePower;  // running mean of the square of log f0's slope between frames, (1/s)^2
    // The note being held and the last few before it (remember_note()), periods in decimated samples.
    struct Note {
        double period_dec = 0.0;
        Index last_f = -1;  // its last voiced frame
        Index frames = 0;   // voiced frames it has held
    };
    Note note_now;
    std::array<Note, 3> old_notes{};
    std::size_t old_next = 0;
    Index ring_frames = 0;  // kRingS in frames

    // A steady tone (running RMS slope under kMinSlope): refined with the flat-topped window.
    bool steady_tone() const noexcept { return slope_power < kMinSlope * kMinSlope; }

    std::vector<float> x;  // full-rate samples [x_off, x_off + x_len)
    Index x_off = 0;
    std::size_t x_len = 0;
    std::vector<float> y;  // decimated samples [y_off, y_off + y_len)
    Index y_off = 0;
    std::size_t y_len = 0;
    Index m_next = 0;    // next decimated sample to compute
    Index f_coarse = 0;  // next coarse frame
    Index f_done = 0;    // next frame to finish

    std::array<Coarse, 3> ring;
    std::vector<float> r;

    // Frames waiting for their right neighbour (vibrato correction); m2_s2 is
    // each one's kernel second moment (0 when the refinement did not run).
    struct Held {
        PitchFrame p;
        double m2_s2 = 0.0;
        bool narrowed = false;  // refined on a stretch of its span (a note change inside it)
        FrameCandidates cands;  // with keep_candidates
    };
    std::array<Held, 2 * kStencil + 1> held{};  // ring: the frames f - 2 kStencil .. f
    std::size_t held_count = 0;                 // frames delivered since reset
    // Curvature of log f0 (1/s^2) at the last frame emitted (NaN: none) and
    // a running mean of its square.
    struct Curvature {
        double last = NAN;
        double power = 0.0;
        double slope_power = 0.0;   // running mean of the slope's square across the stencil, (1/s)^2
        double change_power = 0.0;  // running mean of the square of the curvature's change between frames, (1/s^2)^2
    } curv;

    std::vector<PitchFrame> queue;
    std::vector<FrameCandidates> cand_queue;  // beside queue, with keep_candidates
    FrameCandidates pending;                  // the candidates of the frame finish() delivers
    FrameCandidates pulled;                   // ... of the frame pull() returned last
    std::size_t q_head = 0, q_count = 0;
    std::size_t bad_samples = 0, dropped = 0;

    static std::size_t choose_decimation(const YinConfig& c) {
        const double need = std::max(kSamplesPerShortestPeriod * c.f_max_hz, kMinDecimatedRate);
        return std::max<std::size_t>(1, static_cast<std::size_t>(std::floor(c.sample_rate_hz / need)));
    }

    static const YinConfig& validated(const YinConfig& c) {
        const double fs = c.sample_rate_hz;
        if (!(fs >= 8000.0 && fs <= 192000.0)) bad("sample_rate_hz " + num(fs) + " is outside 8000 .. 192000");
        if (!(c.f_min_hz > 0.0 && std::isfinite(c.f_min_hz))) bad("f_min_hz " + num(c.f_min_hz) + " must be above 0");
        if (!(c.f_max_hz > c.f_min_hz && std::isfinite(c.f_max_hz)))
            bad("f_max_hz " + num(c.f_max_hz) + " must be above f_min_hz " + num(c.f_min_hz));
        if (c.f_max_hz > fs / 4.0)
            bad("f_max_hz " + num(c.f_max_hz) + " is above a quarter of sample_rate_hz " + num(fs) + " (at most " +
                num(fs / 4.0) + ")");
        if (!(c.hop_s > 0.0 && c.hop_s <= 1.0)) bad("hop_s " + num(c.hop_s) + " must be above 0 and at most 1 s");
        if (!(c.span_s >= 0.01 && c.span_s <= 1.0)) bad("span_s " + num(c.span_s) + " is outside 0.01 .. 1 s");
        if (!(c.threshold > 0.0 && c.threshold < 1.0)) bad("threshold " + num(c.threshold) + " is outside 0 .. 1");
        if (!(c.silence_dbfs <= 0.0)) bad("silence_dbfs " + num(c.silence_dbfs) + " must be at most 0");
        if (c.max_block_len_samples == 0) bad("max_block_len_samples 0 must be at least 1");
        return c;
    }

    struct Plan {
        std::size_t dec, block, per_hop, per_window, max_lag;
    };
    // The shortest span_s that holds the coarse search's region (window and
    // longest lag, at the full rate) and one and a half longest periods with
    // the refiner's margins.
    static double min_span_s(const YinConfig& c) {
        const Plan p = plan(c);
        const auto D = static_cast<Index>(p.dec);
        const Index region = static_cast<Index>(p.block * p.per_window + p.max_lag) * D;
        const Index longest = static_cast<Index>(std::ceil(c.sample_rate_hz / c.f_min_hz));
        return static_cast<double>(std::max(region, 3 * longest / 2 + 2 * kFineMargin + 2)) / c.sample_rate_hz;
    }
    static Plan plan(const YinConfig& c) {
        Plan p{};
        p.dec = choose_decimation(c);
        const double fs_d = c.sample_rate_hz / static_cast<double>(p.dec);
        const auto lag_max = static_cast<std::size_t>(std::ceil(fs_d / c.f_min_hz));
        p.max_lag = lag_max + 1;
        const std::size_t window = lag_max + 1;  // YIN: window at least the longest period
        const double hop_dec = c.hop_s * fs_d;
        p.per_hop =
            std::max<std::size_t>(1, static_cast<std::size_t>(std::ceil(hop_dec / static_cast<double>(window))));
        p.block =
            std::max<std::size_t>(1, static_cast<std::size_t>(std::lround(hop_dec / static_cast<double>(p.per_hop))));
        p.per_window = (window + p.block - 1) / p.block;
        return p;
    }

    explicit Impl(const YinConfig& c)
        : cfg(validated(c)),
          decimator(plan(c).dec),
          correlator(plan(c).block, plan(c).per_window, plan(c).max_lag),
          fine(static_cast<std::size_t>(std::lround(c.span_s * c.sample_rate_hz)) + 16, true),
          fine_high(static_cast<std::size_t>(std::lround(c.span_s * c.sample_rate_hz)) + 16, false),
          mid(static_cast<std::size_t>(std::lround(c.span_s * c.sample_rate_hz)) / plan(c).dec + 16),
          noise_floor(c.hop_s),
          runs(static_cast<std::size_t>(std::lround(c.span_s * c.sample_rate_hz)) / plan(c).dec + 16, plan(c).max_lag) {
        const Plan p = plan(c);
        rate = cfg.sample_rate_hz;
        dec_factor = p.dec;
        rate_dec = rate / static_cast<double>(dec_factor);
        block = p.block;
        blocks_per_hop = p.per_hop;
        blocks_per_window = p.per_window;
        hop = block * blocks_per_hop * dec_factor;
        window_dec = block * blocks_per_window;
        max_lag_dec = p.max_lag;
        lag_max = max_lag_dec - 1;
        lag_min = std::max<std::size_t>(2, static_cast<std::size_t>(std::floor(rate_dec / cfg.f_max_hz)));
        span = std::lround(cfg.span_s * rate);
        ring_frames = static_cast<Index>(std::ceil(kRingS * rate / static_cast<double>(hop)));
        const Index D = static_cast<Index>(dec_factor);
        const Index region = static_cast<Index>(window_dec + max_lag_dec) * D;
        const Index longest = static_cast<Index>(std::ceil(rate / cfg.f_min_hz));
        if (region > span || 3 * longest / 2 + 2 * kFineMargin + 2 > span) {
            const double need = min_span_s(cfg);
            bad("f_min_hz " + num(cfg.f_min_hz) + " needs span_s of at least " + num(std::ceil(need * 1e4) / 1e4) +
                " (span_s is " + num(cfg.span_s) + ")");
        }
        const Index half_region = static_cast<Index>(window_dec + max_lag_dec) / 2;
        c0 = std::max(span / 2, D * (half_region + 1));
        a0 = floor_div(c0, D) - half_region;
        // Lookahead: the refinement may read kReach lags past its span, the mid
        // stage the same in decimated samples, the decimator half_len further.
        x_lookahead = (span + 1) / 2 + static_cast<Index>(LagRefiner::kReach) + 2;
        y_lookahead = (span + 1) / (2 * D) + static_cast<Index>(LagRefiner::kReach) + 3;
        // Frame f is finished when frame f + 1's coarse window is complete.
        const Index coarse_end_dec =
            a0 + static_cast<Index>(blocks_per_hop + blocks_per_window + correlator.lookahead_blocks()) *
                     static_cast<Index>(block);  // for frame 1, relative to frame 0
        const Index H = static_cast<Index>(decimator.half_len());
        const Index need =
            std::max({c0 + x_lookahead, (c0 / D + y_lookahead - 1) * D + H + 1, (coarse_end_dec - 1) * D + H + 1});
        delay = static_cast<double>(need - 1 - c0) / rate;
        if (cfg.vibrato_correction)
            delay += static_cast<double>(kStencil * hop) / rate;  // a frame waits for its right neighbour

        const std::size_t keep =
            static_cast<std::size_t>(2 * span + 4 * static_cast<Index>(hop) + 4 * H + (need - c0) + 4 * region + 1024);
        x.assign(keep + kChunk, 0.0f);
        y.assign(x.size() / dec_factor + 1024, 0.0f);
        for (auto& s : ring) {
            s.d.assign(max_lag_dec + 1, 0.0);
            s.dn.assign(max_lag_dec + 1, 1.0);
        }
        r.assign(max_lag_dec + 1, 0.0f);
        const std::size_t q = cfg.max_block_len_samples / hop + 16;
        queue.assign(q, PitchFrame{});
        if (cfg.keep_candidates) cand_queue.assign(q, FrameCandidates{});
        reset();
    }

    void reset() noexcept {
        // Samples before the stream start read as zeros (the decimator's left edge).
        const Index H = static_cast<Index>(decimator.half_len());
        x_off = -H;
        x_len = static_cast<std::size_t>(H);
        std::fill(x.begin(), x.end(), 0.0f);
        y_off = 0;
        y_len = 0;
        m_next = 0;
        f_coarse = 0;
        f_done = 0;
        correlator.reset();
        noise_floor.reset();
        q_head = q_count = 0;
        held_count = 0;
        last_t_s = -1.0;
        last_voiced = false;
        last_restricted = false;
        recent_aperiodicity.fill(1.0);
        recent_aperiodicity_next = 0;
        change_at = -1;
        last_period_dec = 0.0;
        last_voiced_f = -1;
        recent_run = 0;
        slope_power = kStartSlopePower;
        note_now = Note{};
        old_notes.fill(Note{});
        old_next = 0;
        curv = Curvature{};
        pending.n = 0;
        pulled.n = 0;
        bad_samples = dropped = 0;
    }

    Index centre(Index f) const { return c0 + f * static_cast<Index>(hop); }
    Index x_end() const { return x_off + static_cast<Index>(x_len); }
    Index y_end() const { return y_off + static_cast<Index>(y_len); }
    const float* xp(Index n) const { return x.data() + (n - x_off); }
    const float* yp(Index m) const { return y.data() + (m - y_off); }

    // -----------------------------------------------------------------------
    // 2. Input
    // -----------------------------------------------------------------------

    void compact() noexcept {
        const Index D = static_cast<Index>(dec_factor);
        const Index H = static_cast<Index>(decimator.half_len());
        const Index keep_x = std::min(centre(f_done) - span / 2 - 2, m_next * D - H);
        if (keep_x > x_off) {
            const auto drop = static_cast<std::size_t>(std::min<Index>(keep_x - x_off, static_cast<Index>(x_len)));
            std::copy(x.begin() + static_cast<std::ptrdiff_t>(drop), x.begin() + static_cast<std::ptrdiff_t>(x_len),
                      x.begin());
            x_off += static_cast<Index>(drop);
            x_len -= drop;
        }
        const Index block_next = a0 + static_cast<Index>(correlator.blocks_added() * block);
        const Index coarse_next = a0 + f_coarse * static_cast<Index>(blocks_per_hop * block);
        const Index mid_next = floor_div(centre(f_done) - span / 2, D) - 2;
        const Index keep_y = std::min({block_next, coarse_next, mid_next});
        if (keep_y > y_off) {
            const auto drop = static_cast<std::size_t>(std::min<Index>(keep_y - y_off, static_cast<Index>(y_len)));
            std::copy(y.begin() + static_cast<std::ptrdiff_t>(drop), y.begin() + static_cast<std::ptrdiff_t>(y_len),
                      y.begin());
            y_off += static_cast<Index>(drop);
            y_len -= drop;
        }
    }

    void push(std::span<const float> in) noexcept {
        while (!in.empty()) {
            if (x.size() - x_len < kChunk) compact();
            const std::size_t n = std::min({in.size(), kChunk, x.size() - x_len});
            float* dst = x.data() + x_len;
            // Copied, then checked in one pass; a block with a NaN or infinity (rare) has them zeroed and counted.
            std::copy(in.begin(), in.begin() + static_cast<std::ptrdiff_t>(n), dst);
            if (!std::all_of(dst, dst + n, [](float v) { return std::isfinite(v); }))
                for (std::size_t i = 0; i < n; ++i)
                    if (!std::isfinite(dst[i])) {
                        dst[i] = 0.0f;
                        ++bad_samples;
                    }
            x_len += n;
            in = in.subspan(n);
            decimate();
            run();
        }
    }

    void decimate() noexcept {
        const Index D = static_cast<Index>(dec_factor);
        const Index H = static_cast<Index>(decimator.half_len());
        while (m_next * D + H < x_end()) {
            if (y_len == y.size()) compact();
            if (y_len == y.size()) return;  // cannot happen with the sizes chosen; never overrun
            y[y_len++] = decimator.at(xp(m_next * D - H));
            ++m_next;
        }
    }

    void run() noexcept {
        for (;;) {
            bool progressed = false;
            while (f_done + 1 < f_coarse && x_end() >= centre(f_done) + x_lookahead &&
                   y_end() >= floor_div(centre(f_done), static_cast<Index>(dec_factor)) + y_lookahead) {
                finish(f_done);
                ++f_done;
                progressed = true;
            }
            if (f_coarse <= f_done + 1) {
                const std::size_t target = static_cast<std::size_t>(f_coarse) * blocks_per_hop + blocks_per_window +
                                           correlator.lookahead_blocks();
                while (correlator.blocks_added() < target) {
                    const Index start = a0 + static_cast<Index>(correlator.blocks_added() * block);
                    if (start + static_cast<Index>(block) > y_end()) break;
                    correlator.add_block(yp(start));
                }
                if (correlator.blocks_added() == target) {
                    coarse(f_coarse);
                    ++f_coarse;
                    progressed = true;
                }
            }
            if (!progressed) return;
        }
    }

    // -----------------------------------------------------------------------
    // 3. Coarse frame
    // -----------------------------------------------------------------------

    void coarse(Index f) noexcept {
        Coarse& c = ring[static_cast<std::size_t>(f % 3)];
        correlator.window_correlation(r);
        const Index a = a0 + f * static_cast<Index>(blocks_per_hop * block);
        difference_from_correlation(yp(a), window_dec, max_lag_dec, r.data(), c.d.data());
        cumulative_mean_normalised(c.d, c.dn);
        const LagChoice pick = in_room(f, c, absolute_threshold(c.dn, lag_min, lag_max, cfg.threshold));
        c.aperiodicity = pick.aperiodicity;
        c.period_dec = parabolic_minimum(c.d, pick.lag);
    }

    // A note is held while voiced frames stay within kNoteReach of its running period; when another begins, an
    // established one (kNoteFrames) joins the old notes, whose reverberation may still ring (in_room()).
    void remember_note(Index f, double period_dec) noexcept {
        Note& n = note_now;
        if (n.frames > 0 && f - n.last_f <= kNoteGapFrames && std::fabs(period_dec / n.period_dec - 1.0) < kNoteReach) {
            n.period_dec += 0.25 * (period_dec - n.period_dec);
            n.last_f = f;
            ++n.frames;
            return;
        }
        if (n.frames >= kNoteFrames) old_notes[old_next++ % old_notes.size()] = n;
        n = {period_dec, f, 1};
    }

    // Step 4 in a room: a lag that is a common period of an old note still ringing and a new one gives way to the
    // new note's own (beside_old_note()); a much deeper dip at a multiple of the lag is the period
    // (deeper_multiple()), unless that multiple is an old note's period or a multiple of it (its reverberation under
    // a note a fifth or an octave above).
    LagChoice in_room(Index f, const Coarse& c, LagChoice pick) const noexcept {
        auto ringing = [&](const Note& n) { return n.frames >= kNoteFrames && f - n.last_f <= ring_frames; };
        for (const Note& n : old_notes)
            if (ringing(n)) {
                const LagChoice b = beside_old_note(c.dn, pick, n.period_dec, lag_min);
                if (b.lag != pick.lag) {
                    pick = b;
                    break;
                }
            }
        const LagChoice longer = deeper_multiple(c.dn, pick, lag_max);
        if (longer.lag == pick.lag || old_note_multiple(f, static_cast<double>(longer.lag))) return pick;
        return full_rate_deeper(f, c, pick.lag, longer.lag) ? longer : pick;
    }

    // deeper_multiple()'s choice confirmed at the full rate: d' at both lags measured on the full-rate samples of
    // frame f's coarse window, where a short period's dip is sampled finely enough to show its depth.
    bool full_rate_deeper(Index f, const Coarse& c, std::size_t lag, std::size_t longer) const noexcept {
        const double own = full_rate_aperiodicity(f, c, lag), other = full_rate_aperiodicity(f, c, longer);
        return far_deeper(own, other);
    }

    // d' (YIN eq. 8) near the decimated lag j, from frame f's coarse window at the full rate: d at the integer
    // full-rate lags within +-kFineLags of j D, the bottom of the parabola through the lowest, over D times the coarse
    // cumulative mean at j. 1 when the samples are not at hand.
    double full_rate_aperiodicity(Index f, const Coarse& c, std::size_t j) const noexcept {
        constexpr Index kFineLags = 3;
        const Index D = static_cast<Index>(dec_factor);
        const Index start = (a0 + f * static_cast<Index>(blocks_per_hop * block)) * D;
        const std::size_t W = window_dec * dec_factor;
        const Index mid = static_cast<Index>(j) * D;
        if (j == 0 || j >= c.d.size() || start < x_off ||
            start + static_cast<Index>(W) + mid + kFineLags + 1 > x_end() || mid - kFineLags < 1)
            return 1.0;
        const float* s = xp(start);
        const double e0 = vec::sum_sq(s, W);
        std::array<double, 2 * kFineLags + 1> v{};
        std::size_t low = 1;
        for (std::size_t i = 0; i < v.size(); ++i) {
            const float* t = s + mid - kFineLags + static_cast<Index>(i);
            v[i] = std::max(0.0, e0 + vec::sum_sq(t, W) - 2.0 * static_cast<double>(vec::dot(s, t, W)));
            if (i >= 1 && i + 1 < v.size() && v[i] < v[low]) low = i;
        }
        const double bottom = parabola_bottom(v[low - 1], v[low], v[low + 1]);
        double sum = 0.0;
        for (std::size_t k = 1; k <= j; ++k) sum += c.d[k];
        const double mean = sum / static_cast<double>(j) * static_cast<double>(D);
        return mean > 0.0 ? bottom / mean : 1.0;
    }

    // The lag (decimated samples) is 1 .. 4 periods of an old note still ringing.
    bool old_note_multiple(Index f, double lag) const noexcept {
        for (const Note& n : old_notes)
            if (n.frames >= kNoteFrames && f - n.last_f <= ring_frames)
                for (int m = 1; m <= 4; ++m)
                    if (std::fabs(lag / (m * n.period_dec) - 1.0) < kNoteReach) return true;
        return false;
    }

    // -----------------------------------------------------------------------
    // 4. Final frame
    // -----------------------------------------------------------------------

    void emit(const PitchFrame& p, const FrameCandidates& cands) noexcept {
        if (q_count == queue.size()) {
            q_head = (q_head + 1) % queue.size();
            --q_count;
            ++dropped;
        }
        const std::size_t at = (q_head + q_count) % queue.size();
        queue[at] = p;
        if (!cand_queue.empty()) {
            cand_queue[at] = cands;
            if (p.voiced() && cands.n > 0) cand_queue[at].c[0] = {p.f0_hz, cands.c[0].aperiodicity, p.confidence};
        }
        ++q_count;
    }

    // The integer minimum of d within +-radius of lag, refined by the parabola.
    static double dip_near(const std::vector<double>& d, double lag, double radius) noexcept {
        const auto lo = static_cast<std::size_t>(std::max(1.0, std::floor(lag - radius)));
        const auto hi = static_cast<std::size_t>(std::min(static_cast<double>(d.size() - 2), std::ceil(lag + radius)));
        std::size_t best = lo;
        for (std::size_t j = lo; j <= hi; ++j)
            if (d[j] < d[best]) best = j;
        return parabolic_minimum(d, best);
    }

    void finish(Index f) noexcept {
        const Index D = static_cast<Index>(dec_factor);
        Coarse& cur = ring[static_cast<std::size_t>(f % 3)];
        const Index cf = centre(f);
        PitchFrame out;
        out.t_s = static_cast<double>(cf) / rate;

        // Level of the span, and of its halves: a span that is silent in one
        // half (a note starting or stopping inside it, after digital silence)
        // has a difference function dominated by the zeros, whose dips say
        // nothing of the period; no estimate from it.
        const Index lo = cf - (span - 1) / 2;
        const auto half = static_cast<std::size_t>(span / 2);
        const double e1 = vec::sum_sq(xp(lo), half);
        const double e2 = vec::sum_sq(xp(lo + static_cast<Index>(half)), static_cast<std::size_t>(span) - half);
        const double ms = (e1 + e2) / static_cast<double>(span);
        out.level_dbfs = ms > 0.0 ? 10.0 * std::log10(ms) : -std::numeric_limits<double>::infinity();
        const bool one_sided = std::min(e1, e2) < kOneSidedRatio * std::max(e1, e2);

        // Step 6, best local estimate: the neighbour with the clearest period
        // (lowest d'); where ours disagrees with it by more than 20%, search
        // again within +-20% of its period.
        double period = cur.period_dec, aper = cur.aperiodicity;
        const Coarse* best = &cur;
        for (Index g : {f - 1, f + 1}) {
            if (g < 0) continue;
            const Coarse& o = ring[static_cast<std::size_t>(g % 3)];
            if (o.aperiodicity < best->aperiodicity) best = &o;
        }
        if (best != &cur && std::fabs(best->period_dec - period) > 0.2 * best->period_dec) {
            const auto lo_lag = static_cast<std::size_t>(std::floor(0.8 * best->period_dec));
            const auto hi_lag = static_cast<std::size_t>(std::ceil(1.2 * best->period_dec));
            const LagChoice pick =
                absolute_threshold(cur.dn, std::max(lo_lag, lag_min), std::min(hi_lag, lag_max), cfg.threshold);
            period = parabolic_minimum(cur.d, pick.lag);
            aper = pick.aperiodicity;
        }
        // A note change inside the coarse window blurs its dip: the newest
        // note may still be periodic over enough of the span (refinement path).
        if (!(aper < cfg.threshold) && out.level_dbfs >= cfg.silence_dbfs && !one_sided)
            changed_note(f, lo, period, aper);
        continuing(f, cur, period, aper);
        // Voicing: the calibrated probability that this period is right (yin_voicing.h), judged against the
        // running noise floor; silent and one-sided spans are unvoiced with confidence 0.
        const bool silent = out.level_dbfs < cfg.silence_dbfs || one_sided;
        const double floor_dbfs = out.level_dbfs < cfg.silence_dbfs ? noise_floor.floor_dbfs(out.level_dbfs)
                                                                    : noise_floor.update(out.level_dbfs);
        out.confidence = silent ? 0.0 : voicing_probability({aper, out.level_dbfs, floor_dbfs});
        // Far above the floor (clean conditions) a d' over YIN's threshold is not noise but a mixture (two notes
        // inside the span after a change): there YIN's own test decides, as the live settling bar needs.
        const bool clear = aper < cfg.threshold || out.level_dbfs - floor_dbfs < kClearAboveFloorDb;
        if (!clear) out.confidence = std::min(out.confidence, 0.49);  // unvoiced frames stay under 0.5
        pending.n = 0;
        if (cfg.keep_candidates && !silent && period > 0.0)
            pending = frame_candidates(
                cur.d, cur.dn, {lag_min, lag_max, rate_dec, period, aper, out.confidence, out.level_dbfs, floor_dbfs});
        if (silent || !(out.confidence >= 0.5) || !clear || !(period > 0.0)) {
            deliver(out, 0.0);
            return;
        }

        // The samples the refinement may use: the span, or where a note
        // changes inside it, the stretch periodic at the newest note's period.
        Index A = lo, B = lo + span;
        double Tc = period * static_cast<double>(D);  // full-rate samples
        const bool restricted = periodic_stretch(f, period, A, B, Tc);
        last_restricted = restricted;
        double m2_s2 = 0.0, t_centre = static_cast<double>(cf);
        double T = refine(cur, restricted ? Tc / static_cast<double>(D) : period, !restricted, A, B, t_centre, m2_s2);
        if (!(std::fabs(T / Tc - 1.0) < 0.06)) {  // refinement lost the period: keep the coarse one
            T = Tc;
            m2_s2 = 0.0;
        }
        out.f0_hz = rate / T;
        // The slope over kSlopeFrames hops of a run of voiced frames (over one hop it is mostly the estimates' noise).
        recent_run = last_voiced_f == f - 1 ? recent_run + 1 : 1;
        const double then_hz = recent_f0[static_cast<std::size_t>(f % kSlopeFrames)];
        if (recent_run > kSlopeFrames) {
            const double slope =
                std::log(out.f0_hz / then_hz) / (static_cast<double>(kSlopeFrames * static_cast<Index>(hop)) / rate);
            slope_power += kSlopeAlpha * (slope * slope - slope_power);
        }
        recent_f0[static_cast<std::size_t>(f % kSlopeFrames)] = out.f0_hz;
        last_period_dec = T / static_cast<double>(D);
        recent_aperiodicity[recent_aperiodicity_next++ % recent_aperiodicity.size()] = aper;
        last_voiced_f = f;
        remember_note(f, last_period_dec);
        out.t_s = t_centre / rate;
        deliver(out, m2_s2, restricted);
    }

    // Refinement of the period (decimated samples) inside the samples [A, B):
    // returns the period in full-rate samples (0 when the window left is too
    // short to refine), with the centre of the samples compared and the kernel's second
    // moment. (a) Period multiples within the coarse lag range, on the coarse d
    // itself (only when the coarse window is the span's: `multiples`): each
    // step multiplies the lag while the prediction error stays well inside
    // half a period (no jump to a neighbouring multiple). (b) The lag K T in
    // the decimated copy. (c) The same at the full rate.
    double refine(const Coarse& cur, double period, bool multiples, Index A, Index B, double& t_centre,
                  double& m2_s2) noexcept {
        const Index D = static_cast<Index>(dec_factor);
        const double Tc = period * static_cast<double>(D);
        const double centre = multiples ? t_centre : 0.5 * static_cast<double>(A + B - 1);
        const double usable = static_cast<double>(B - A - 2 * kFineMargin - 2);
        long K = std::max(1L, std::lround(2.0 * usable / (3.0 * Tc)));
        while (K > 1 && usable - static_cast<double>(K) * Tc < std::max(0.5 * Tc, 32.0)) --K;
        double t_dec = period;                                      // current period estimate, decimated samples
        double sigma = multiples ? kCoarseLagError : kRunLagError;  // its uncertainty, decimated samples
        long ks = 1;
        const double cap = static_cast<double>(max_lag_dec - 1);
        for (int step = 0; multiples && step < 8 && ks < K; ++step) {
            const double room = std::min(2.0, 0.5 * t_dec - 0.5);
            long kn = std::min<long>(K, static_cast<long>(std::floor(room / sigma)));
            kn = std::min<long>(kn, static_cast<long>(std::floor(cap / t_dec)));
            if (kn <= ks) break;
            const double radius = std::floor(static_cast<double>(kn) * sigma) + 1.0;
            t_dec = dip_near(cur.d, static_cast<double>(kn) * t_dec, radius) / static_cast<double>(kn);
            sigma = kCoarseLagError / static_cast<double>(kn);
            ks = kn;
        }
        if (!multiples)  // the mid stage below may move the lag by a few samples at most
            K = std::max(1L, std::min<long>(K, static_cast<long>(std::floor(std::min(2.0, 0.5 * t_dec) / sigma))));
        // (b) The lag K T in the decimated copy, inside the final span.
        const double kt0 = static_cast<double>(K) * t_dec * static_cast<double>(D);
        const double w_full = usable - kt0;
        const double s_full = centre - (w_full - 1.0 + kt0) / 2.0;
        const auto lag_dec = static_cast<Index>(std::lround(static_cast<double>(K) * t_dec));
        const Index s_dec = static_cast<Index>(std::ceil(s_full / static_cast<double>(D)));
        const Index w_dec = static_cast<Index>(std::floor((s_full + w_full + kt0) / static_cast<double>(D))) - s_dec -
                            lag_dec - kFineMargin;
        double kt = kt0;
        if (w_dec >= 16) {
            const LagRefiner::Result m =
                mid.refine(yp(s_dec), static_cast<std::size_t>(w_dec), static_cast<std::size_t>(lag_dec));
            if (m.ok) kt = m.lag * static_cast<double>(D);
        }
        // (c) The same at the full rate.
        const Index j0 = std::lround(kt);
        const Index W = static_cast<Index>(usable) - j0;
        if (W < 16) return 0.0;
        const Index s = std::lround(centre - static_cast<double>(W - 1 + j0) / 2.0);
        LagRefiner& at_full_rate = Tc >= kWideKernelLag ? fine : fine_high;
        const LagRefiner::Result fr =
            at_full_rate.refine(xp(s), static_cast<std::size_t>(W), static_cast<std::size_t>(j0), steady_tone());
        if (fr.ok) {
            kt = fr.lag;
            t_centre = static_cast<double>(s) + (static_cast<double>(W) - 1.0 + kt) / 2.0;
            m2_s2 = kernel_second_moment(static_cast<double>(W), kt, steady_tone()) / (rate * rate);
        } else if (!multiples) {
            t_centre = centre;
        }
        return kt / static_cast<double>(K);
    }

    // Of two stretches, the one that ends last (the newest note); where both
    // end within a few samples of each other, the more periodic one.
    static bool newer(const PeriodicRun::Result& a, const PeriodicRun::Result& b) noexcept {
        if (a.end > b.end + 8) return true;
        if (b.end > a.end + 8) return false;
        return a.aperiodicity < 0.5 * b.aperiodicity;
    }

    // The period of the newest note in the decimated samples [m0, m0 + len), 0 when none.
    double newest(Index m0, std::size_t len) noexcept {
        return runs.newest_period(yp(m0), len, lag_min, lag_max, kNewestThreshold);
    }

    // Continuity across frames (the transition prior of pYIN: M. Mauch and S. Dixon, "pYIN: a fundamental frequency
    // estimator using probabilistic threshold distributions", ICASSP 2014, pp. 659-663, here greedy and causal): a
    // chosen lag longer than the last voiced frame's period by more than a vibrato moves it in two hops is a common
    // period of two sounds (a note and the previous one's reverberation) or a subharmonic in noise; where the
    // difference function still dips at the continuing period nearly as deep, the pitch goes on there.
    void continuing(Index f, const Coarse& cur, double& period, double& aper) noexcept {
        if (!(last_period_dec > 0.0) || f - last_voiced_f > kContinuityFrames) return;
        if (!(period > (1.0 + 2.0 * kContinuityReach) * last_period_dec)) return;
        const auto lo =
            std::max(lag_min, static_cast<std::size_t>(std::ceil((1.0 - kContinuityReach) * last_period_dec)));
        const auto hi =
            std::min(lag_max, static_cast<std::size_t>(std::floor((1.0 + kContinuityReach) * last_period_dec)));
        if (lo > hi || lo < 1) return;
        std::size_t best = lo;
        for (std::size_t j = lo; j <= hi; ++j)
            if (cur.dn[j] < cur.dn[best]) best = j;
        if (!(cur.dn[best] <= cur.dn[best - 1] && cur.dn[best] <= cur.dn[best + 1])) return;  // not a dip
        if (!(cur.dn[best] <= kContinuityRatio * aper + kContinuityTolerance)) return;
        // The chosen lag is twice or three times the continuing period and far deeper (deeper_multiple()): the pitch
        // held was an octave or a twelfth too high, and goes on at the chosen lag.
        const LagChoice longer = deeper_multiple(cur.dn, {best, cur.dn[best], false}, lag_max);
        if (longer.lag != best && std::fabs(static_cast<double>(longer.lag) - period) <= 1.5 &&
            !old_note_multiple(f, period) && full_rate_deeper(f, cur, best, longer.lag))
            return;
        period = parabolic_minimum(cur.d, best);
        aper = cur.dn[best];
    }

    // A frame the coarse stage calls aperiodic, after a voiced frame: where
    // the newest note (or a neighbour's) is periodic over enough of the span,
    // takes that period and the stretch's aperiodicity.
    void changed_note(Index f, Index lo, double& period, double& aper) noexcept {
        if (f < 1) return;
        const Coarse& prev = ring[static_cast<std::size_t>((f - 1) % 3)];
        const Coarse& next = ring[static_cast<std::size_t>((f + 1) % 3)];
        // An onset is the voicing's business, not a change between notes; a change may leave the frames just after
        // it unvoiced (two notes in the span), and it is still a change.
        if (!last_voiced && !(last_voiced_f >= 0 && f - last_voiced_f <= kChangeGapFrames)) return;
        Index A = lo, B = lo + span;
        double Tc = 0.0;
        const double guess = last_restricted                     ? last_run_period
                             : next.aperiodicity < cfg.threshold ? next.period_dec
                                                                 : prev.period_dec;
        if (!periodic_stretch(f, guess, A, B, Tc, !last_voiced) || !(last_run_aperiodicity < cfg.threshold)) return;
        period = Tc / static_cast<double>(dec_factor);
        aper = std::min(aper, last_run_aperiodicity);
    }

    // The coarse frames f - 1, f, f + 1 agree (periods within kSteadyRatio,
    // aperiodicities within twice the lowest and 0.02): no note change
    // reaches into the span but its outer few milliseconds, which their
    // windows do not cover and the refinement's window barely weighs.
    static bool steady(const Coarse& a, const Coarse& b, const Coarse& c) noexcept {
        const double p_lo = std::min({a.period_dec, b.period_dec, c.period_dec});
        const double p_hi = std::max({a.period_dec, b.period_dec, c.period_dec});
        const double a_lo = std::min({a.aperiodicity, b.aperiodicity, c.aperiodicity});
        const double a_hi = std::max({a.aperiodicity, b.aperiodicity, c.aperiodicity});
        return p_hi < kSteadyRatio * p_lo && a_hi < 2.0 * a_lo + 0.02;
    }

    // The newest note's stretch when the span holds a change that the frame's own period blurs: the period of the
    // span's end (newest()), periodic from some way into the span to its end, and clearly so. Sets A, B and Tc as
    // periodic_stretch() does.
    bool newest_stretch(Index f, Index m0, std::size_t len, Index& A, Index& B, double& Tc) noexcept {
        return newest_stretch(f, m0, len, newest(m0, len), A, B, Tc);
    }
    // ... with the newest note's period p (decimated samples) already measured.
    bool newest_stretch(Index f, Index m0, std::size_t len, double p, Index& A, Index& B, double& Tc) noexcept {
        const double held_aperiodicity = *std::min_element(recent_aperiodicity.begin(), recent_aperiodicity.end());
        if (!(held_aperiodicity < kCleanAperiodicity) || !(p > 0.0) || !(last_period_dec > 0.0)) return false;
        // A change between notes: the newest period is further from the last voiced frame's than a vibrato moves it
        // (kStepReach, and kVibratoReach more for each hop in between), or a change is already under way.
        const double reach =
            kStepReach + kVibratoReach * static_cast<double>(std::max<Index>(0, f - last_voiced_f - 1));
        if (!last_restricted && !(std::fabs(last_period_dec / p - 1.0) > reach)) return false;
        PeriodicRun::Result r = runs.find(yp(m0), len, p, 0.0, stretch_min_len(p), kNewestRunFloor, false);
        if (r.found && !r.whole && r.begin > 0 && !(r.aperiodicity < kNewestRunAperiodicity))
            r = runs.tightened(r, kNewestRunAperiodicity, std::max<std::size_t>(2, static_cast<std::size_t>(p / 8.0)),
                               stretch_min_len(p));
        if (!r.found || r.whole || r.begin == 0 || r.end + 2 < len || !(r.aperiodicity < kNewestRunAperiodicity))
            return false;
        // The note before it ends where it begins: a blend of both notes over the change can look periodic at a
        // period between them for a short while, but then the old note's own stretch reaches well into it.
        const double old_p = last_period_dec;
        if (std::fabs(old_p / p - 1.0) > kStepReach) {
            const PeriodicRun::Result o =
                runs.find(yp(m0), len, old_p, 0.0, static_cast<std::size_t>(std::ceil(old_p)), kNewestRunFloor, false);
            if (o.found && static_cast<double>(o.end) - old_p > static_cast<double>(r.begin) + 0.25 * p) return false;
        }
        take_stretch(m0, r, p, A, B, Tc);
        return true;
    }

    // The samples a stretch needs at the period p (decimated samples): 1.5 periods and the refiner's margins.
    std::size_t stretch_min_len(double p) const noexcept {
        const auto D = static_cast<double>(dec_factor);
        const double t = p * D;
        return static_cast<std::size_t>(
                   std::ceil((t + std::max(0.5 * t, 96.0) + static_cast<double>(2 * kFineMargin + 2)) / D)) +
               2;
    }

    // Narrows [A, B) to the stretch r found in the decimated samples from m0, at the period p.
    void take_stretch(Index m0, const PeriodicRun::Result& r, double p, Index& A, Index& B, double& Tc) noexcept {
        const Index D = static_cast<Index>(dec_factor);
        last_run_aperiodicity = r.aperiodicity;
        last_run_period = p;
        const Index span_end = B;
        A = std::max(A, (m0 + static_cast<Index>(r.begin)) * D);
        B = std::min(B, (m0 + static_cast<Index>(r.end) - 1) * D + 1);
        if (B + 2 * D >= span_end && r.begin > 0) change_at = A;  // the newest note, from its start
        Tc = p * static_cast<double>(D);
    }

    // Where the span [A, B) holds a note change, narrows it to the periodic
    // stretch (pitch/dsp/periodic_run.h) at the frame's own period or a
    // neighbour's, the one that ends last (the newest note), and sets Tc
    // (full-rate samples) to that period. The lag may follow the slope the
    // neighbours' coarse periods show (a vibrato's sweep), up to kMaxSweep.
    // Returns false (the span unchanged) when the span is periodic throughout
    // or no stretch is long enough. newest_only: only a clean stretch of a new
    // note will do (newest_stretch(); a frame after unvoiced ones).
    bool periodic_stretch(Index f, double period, Index& A, Index& B, double& Tc, bool newest_only = false) noexcept {
        const Index D = static_cast<Index>(dec_factor);
        const Index m0 = floor_div(A + D - 1, D), m1 = floor_div(B - 1, D) + 1;
        if (m1 - m0 < 32 || f < 1) return false;
        const auto len = static_cast<std::size_t>(m1 - m0);
        const Coarse& prev = ring[static_cast<std::size_t>((f - 1) % 3)];
        const Coarse& next = ring[static_cast<std::size_t>((f + 1) % 3)];
        if (!last_restricted && steady(prev, ring[static_cast<std::size_t>(f % 3)], next)) return false;
        if (newest_only) return newest_stretch(f, m0, len, A, B, Tc);
        const double hop_dec = static_cast<double>(hop) / static_cast<double>(D);
        double slope = 0.0;
        if (prev.aperiodicity < cfg.threshold && next.aperiodicity < cfg.threshold) {
            const double s = (next.period_dec - prev.period_dec) / (2.0 * hop_dec);
            if (std::fabs(s) <= kMaxSweep * period / rate_dec) slope = s;
        }
        PeriodicRun::Result best =
            runs.find(yp(m0), len, period, slope, stretch_min_len(period), kRunFloor, !last_restricted);
        // Just after a change the coarse period blends both notes, and the span measures loosely periodic at it
        // (under kRunFloor) throughout: the newest note's own period, from the span's end, may show the change.
        if (best.whole && best.aperiodicity > kNewestRunAperiodicity && newest_stretch(f, m0, len, A, B, Tc))
            return true;
        if (best.whole && !(last_restricted && best.aperiodicity > kNewestThreshold)) {
            // A change found by the frames before stays cut out while the span still holds it (a small step's
            // old note may measure under the threshold at the span's edge, yet pull the estimate).
            const auto need = static_cast<Index>(stretch_min_len(period)) * D;
            if (!last_restricted || !(change_at > A) || change_at + need > B) return false;
            A = change_at;
            Tc = period * static_cast<double>(D);
            last_run_aperiodicity = best.aperiodicity;
            last_run_period = period;
            return true;
        }
        double best_period = period;
        // The neighbours' coarse periods, and while a change is under way the period the last frame kept to.
        const double others[3] = {prev.aperiodicity < cfg.threshold ? prev.period_dec : 0.0,
                                  next.aperiodicity < cfg.threshold ? next.period_dec : 0.0,
                                  last_restricted ? last_run_period : 0.0};
        for (const double p : others) {
            if (!(p > 0.0) || std::fabs(p / period - 1.0) < 0.015) continue;
            const PeriodicRun::Result r = runs.find(yp(m0), len, p, slope, stretch_min_len(p), kRunFloor);
            if (r.found && (!best.found || newer(r, best))) {
                best = r;
                best_period = p;
            }
        }
        if (!best.found || best.end + 2 < len) {
            const double p = newest(m0, len);
            if (newest_stretch(f, m0, len, p, A, B, Tc)) return true;
            if (p > 0.0 && std::fabs(p / best_period - 1.0) >= 0.015) {
                const PeriodicRun::Result r = runs.find(yp(m0), len, p, 0.0, stretch_min_len(p), kRunFloor);
                if (r.found && (!best.found || newer(r, best))) {
                    best = r;
                    best_period = p;
                }
            }
        }
        if (!best.found || !(best.aperiodicity < cfg.threshold)) return false;
        take_stretch(m0, best, best_period, A, B, Tc);
        return true;
    }

    // -----------------------------------------------------------------------
    // 5. Vibrato correction
    // -----------------------------------------------------------------------
    //
    // The refined lag L = K T over a window of W samples aligns x[n] with
    // x[n + L] for n under the window w; the K periods from n span the
    // boxcar [n, n + L], so the estimate is f0 averaged over w convolved with
    // that boxcar: a kernel of second moment var(w) + L^2 / 12, var(w) =
    // (W / 2)^2 / 7 for the biweight (1 - u^2)^2 on [-1, 1], (W / 2)^2 51 / 209
    // for the flat-topped (1 - u^8)^2 a steady tone is refined with. For f0 locally
    // quadratic, log f0_est = log f0 + m2 / 2 (log f0)'' (kernel-smoothing
    // bias, Wand and Jones 1995, sec. 2.5); the curvature comes from the
    // estimates of frames f - 1, f, f + 1, and is removed from frame f.
    static double kernel_second_moment(double window, double lag, bool flat) noexcept {
        return yin_kernel_second_moment(window, lag, flat);
    }

    // Frames leave in time order: a frame narrowed to a stretch after a
    // change is centred later than its grid point, so a frame that would
    // come out earlier than the last one is moved just after it (unvoiced:
    // its t says nothing) or dropped to unvoiced (voiced: rare, the frame
    // straddling the change).
    void deliver(const PitchFrame& frame, double m2_s2, bool narrowed = false) noexcept {
        PitchFrame p = frame;
        const double after = last_t_s + 0.5 / rate;
        if (p.t_s < after) {
            p.t_s = after;
            if (p.voiced()) {
                p.f0_hz = 0.0;
                p.confidence = std::min(p.confidence, 0.49);  // unvoiced frames stay under 0.5
                m2_s2 = 0.0;
            }
        }
        last_t_s = p.t_s;
        last_voiced = p.voiced();
        if (!cfg.vibrato_correction) {
            emit(p, pending);
            return;
        }
        const std::size_t j = held_count++;
        held[j % held.size()] = {p, m2_s2, narrowed, pending};
        if (j < kStencil) return;
        const std::size_t b = j - kStencil;
        if (b < kStencil) {
            emit(held[b % held.size()].p, held[b % held.size()].cands);  // the first frames have no left neighbour
            return;
        }
        emit(corrected(held[(b - kStencil) % held.size()], held[b % held.size()], held[j % held.size()], curv),
             held[b % held.size()].cands);
    }

    // A vibrato's curvature changes little from one frame to the next; a
    // note change inside the neighbours' spans makes it jump and flip sign.
    // On a steady tone in noise the curvature is noise alone, a bias of a
    // tenth of a cent or so; the correction is weighted by the Wiener gain
    // P / (P + N) (N. Wiener, Extrapolation, Interpolation, and Smoothing of
    // Stationary Time Series, 1949), P the running mean of the curvature's
    // square and N that of a 0.3-cent bias, so steady tones in noise keep
    // their precision while a vibrato (biases of 0.5 to 12 cents) is corrected.
    // A tone whose running RMS slope is under kMinSlope is steady: its
    // curvature is the estimates' noise, and it is left uncorrected.
    static PitchFrame corrected(const Held& a, const Held& b, const Held& c, Curvature& cv) noexcept {
        PitchFrame out = b.p;
        const double prev = cv.last;
        cv.last = NAN;
        if (!(a.p.voiced() && b.p.voiced() && c.p.voiced()) || b.m2_s2 <= 0.0) return out;
        // A note change among them: a narrowed frame's small m2 would let a step pass for a vibrato.
        if (a.narrowed || b.narrowed || c.narrowed) return out;
        const double ga = std::log(a.p.f0_hz), gb = std::log(b.p.f0_hz), gc = std::log(c.p.f0_hz);
        const double hab = b.p.t_s - a.p.t_s, hbc = c.p.t_s - b.p.t_s;
        if (!(hab > 0.0 && hbc > 0.0)) return out;
        const double curvature = 2.0 * ((gc - gb) / hbc - (gb - ga) / hab) / (hab + hbc);  // (log f0)'', 1/s^2
        const double bias = 0.5 * b.m2_s2 * curvature;                                     // natural-log units
        const double slope = (gc - ga) / (hab + hbc);
        cv.slope_power += kPowerAlpha * (slope * slope - cv.slope_power);
        if (!(std::fabs(bias) < kMaxVibratoBias)) return out;  // a note change, not a vibrato
        cv.last = curvature;
        if (std::isnan(prev)) return out;
        cv.change_power += kPowerAlpha * ((curvature - prev) * (curvature - prev) - cv.change_power);
        const double floor = 2.0 * kSmallBias / b.m2_s2;  // curvature change allowed beyond 50 %
        if (!(std::fabs(curvature - prev) <= 0.5 * std::max(std::fabs(curvature), std::fabs(prev)) + floor)) return out;
        cv.power += kPowerAlpha * (curvature * curvature - cv.power);
        const double noise = kNoiseBias / (0.5 * b.m2_s2);  // that bias as a curvature
        const double gain = cv.power / (cv.power + std::max(noise * noise, kChangeShare * cv.change_power));
        if (cv.slope_power < kMinSlope * kMinSlope) return out;  // a steady tone: its curvature is noise alone
        out.f0_hz = b.p.f0_hz * std::exp(-gain * bias);
        return out;
    }
};

// ---------------------------------------------------------------------------
// [SECTION] Public interface
// ---------------------------------------------------------------------------

double yin_kernel_second_moment(double window_samples, double lag_samples, bool flat) noexcept {
    const double var_w = flat ? 51.0 / 209.0 : 1.0 / 7.0;  // second moment of the window on [-1, 1]
    return 0.25 * window_samples * window_samples * var_w + lag_samples * lag_samples / 12.0;
}

YinTracker::YinTracker(const YinConfig& config) : impl_(std::make_unique<Impl>(config)) {}

double YinTracker::min_span_s(const YinConfig& config) {
    YinConfig c = config;
    c.span_s = 0.5;  // any valid value: only the others are checked here
    return Impl::min_span_s(Impl::validated(c));
}
YinTracker::~YinTracker() = default;
YinTracker::YinTracker(YinTracker&&) noexcept = default;
YinTracker& YinTracker::operator=(YinTracker&&) noexcept = default;

void YinTracker::push(std::span<const float> samples) noexcept { impl_->push(samples); }

bool YinTracker::pull(PitchFrame& out) noexcept {
    Impl& s = *impl_;
    if (s.q_count == 0) return false;
    out = s.queue[s.q_head];
    if (!s.cand_queue.empty()) s.pulled = s.cand_queue[s.q_head];
    s.q_head = (s.q_head + 1) % s.queue.size();
    --s.q_count;
    return true;
}

const FrameCandidates& YinTracker::candidates() const noexcept { return impl_->pulled; }
void YinTracker::reset() noexcept { impl_->reset(); }
const YinConfig& YinTracker::config() const noexcept { return impl_->cfg; }
std::size_t YinTracker::hop_len_samples() const noexcept { return impl_->hop; }
double YinTracker::hop_s() const noexcept { return static_cast<double>(impl_->hop) / impl_->rate; }
double YinTracker::delay_s() const noexcept { return impl_->delay; }
std::size_t YinTracker::bad_samples() const noexcept { return impl_->bad_samples; }
std::size_t YinTracker::dropped_frames() const noexcept { return impl_->dropped; }
std::size_t YinTracker::decimation() const noexcept { return impl_->dec_factor; }

}  // namespace beatless::pitch
