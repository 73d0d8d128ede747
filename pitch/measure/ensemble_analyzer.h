// EnsembleAnalyzer — each player's deviation from their voice of a just chord, under the three reference roots.
// Method: a ReadingMaker per player (pitch/measure/reading_maker.h), the references of pitch/theory/chord.h, pair beat
// rates |N f_low - D f_high| (Helmholtz 1863, ch. VIII; pitch/theory/beats.h). Rules: DEVELOPERS.md.
// Thread: the analysis thread (process()). Allocates: in the constructor only. Locks: no.
// Index: 1 Setup types · 2 Readings (plain data) · 3 EnsembleAnalyzer.
#pragma once

#include "pitch/dsp/yin.h"
#include "pitch/measure/channel_checks.h"
#include "pitch/measure/reading.h"
#include "pitch/measure/reading_maker.h"
#include "pitch/theory/chord.h"

#include <array>
#include <cmath>
#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <vector>

namespace beatless::pitch {

// ---------------------------------------------------------------------------
// [SECTION] Setup types
// ---------------------------------------------------------------------------

constexpr std::size_t kMaxPlayers = 8;
constexpr std::size_t kMaxPlayerPairs = kMaxPlayers * (kMaxPlayers - 1) / 2;  // 28
constexpr std::size_t kReferenceCount = 3;

// Index of ChordReference in per-reference arrays.
constexpr std::size_t reference_index(ChordReference r) { return static_cast<std::size_t>(r); }
// "drone", "bass", "best-fit" (command line, settings).
std::string_view reference_key(ChordReference r);
ChordReference parse_reference(std::string_view key);  // throws Error naming the text

struct Player {
    std::string name;       // "Soprano", shown on the lane
    std::size_t voice = 0;  // chord voice, 0 = lowest
    int channel = 0;        // input channel, 0-based
};

// Pair (a, b), a < b < players, in the order (0,1), (0,2) .. (1,2) ...
constexpr std::size_t player_pair_index(std::size_t a, std::size_t b, std::size_t players) {
    return a * (2 * players - a - 1) / 2 + (b - a - 1);
}

struct EnsembleConfig {
    double root_hz = 130.8128;  // the chord root, the drone's fundamental (default C3)
    double a4_hz = 440.0;       // 12-TET reference (default ISO 16)
    double hop_s = 0.005;       // tracker hop (default 5 ms)
    double off_voice_cents =
        80.0;  // further than this from the group's median deviation: another note (default 80 cents)
    double near_voice_cents = 40.0;  // an off-voice centre this close to another voice names it (default 40 cents)
    int max_beat_partial = 16;       // pairs whose meeting partials lie higher get no beat rate (default 16)
    ReadingConfig reading;           // per player (root and a4 are set from the fields above)
    ChannelChecksConfig checks;      // silent channels, two channels with one voice
};

// Checks a setup: 1..kMaxPlayers players, voices inside the chord, channels
// in 0..channels_available-1 and not shared. Throws Error naming the player.
void check_players(const Chord& chord, std::span<const Player> players, int channels_available);

// ---------------------------------------------------------------------------
// [SECTION] Readings (plain data, copied between threads)
// ---------------------------------------------------------------------------

enum class PlayerState : std::uint8_t {
    sounding,   // voiced, counted in the references
    resting,    // no pitch now (the channel has sound or the whole group rests)
    silent,     // the channel has been silent while others sound: a microphone problem
    copy,       // the channel carries another player's voice (copy_of says whose)
    off_voice,  // voiced, but another note than this player's voice
};

struct PlayerReading {
    double f0_hz = 0.0;         // instantaneous, 0 when unvoiced
    double centre_f0_hz = NAN;  // vibrato centre
    double confidence = 0.0;
    double level_dbfs = -INFINITY;
    double target_cents = NAN;      // the voice above the root, in the player's octave
    int octaves = 0;                // the player's octave shift of the chord voice
    double dev_cents = NAN;         // instantaneous, against the fixed root (+ sharp)
    double centre_dev_cents = NAN;  // vibrato centre, against the fixed root
    double steadiness_cents = NAN;
    PlayerState state = PlayerState::resting;
    int copy_of = -1;     // the player whose voice this channel carries
    int near_voice = -1;  // off_voice: the chord voice (0 = lowest) the centre sits near, octave-equivalent; -1 none
    bool clipped = false;
};

struct PairBeat {
    std::int16_t partial_a = -1;  // harmonic of player a that meets ...
    std::int16_t partial_b = -1;  // ... this harmonic of player b (when just)
    double beat_hz = NAN;         // |partial_a f_a - partial_b f_b| at the centres; NaN unless both sound
};

struct EnsembleReading {
    double t_s = 0.0;               // stream time of the frames' centre
    std::int64_t sample_index = 0;  // input sample at t_s
    int players = 0;
    std::array<double, kReferenceCount> root_hz{};  // per reference (reference_index); NaN when it cannot be formed
    std::array<PlayerReading, kMaxPlayers> p{};
    std::array<PairBeat, kMaxPlayerPairs> pairs{};

    // The player's deviation under a reference: centre (default) or instantaneous.
    double dev(std::size_t player, ChordReference ref, bool centre = true) const noexcept {
        const PlayerReading& r = p[player];
        const double fixed = root_hz[reference_index(ChordReference::fixed_root)];
        const double root = root_hz[reference_index(ref)];
        const double d = centre ? r.centre_dev_cents : r.dev_cents;
        return d - 1200.0 * std::log2(root / fixed);
    }
    // The pair of players a and b (either order); an empty pair when a == b or either is not a player.
    const PairBeat& pair(std::size_t a, std::size_t b) const noexcept {
        static constexpr PairBeat kNone{};
        const auto n = static_cast<std::size_t>(players);
        if (a == b || a >= n || b >= n) return kNone;
        return a < b ? pairs[player_pair_index(a, b, n)] : pairs[player_pair_index(b, a, n)];
    }
};

// ---------------------------------------------------------------------------
// [SECTION] EnsembleAnalyzer
// ---------------------------------------------------------------------------

class EnsembleAnalyzer {
public:
    // Throws Error on a bad setup (check_players with channels_available = 64).
    EnsembleAnalyzer(const Chord& chord, std::vector<Player> players, const EnsembleConfig& config);
    ~EnsembleAnalyzer();

    // One frame per player, all at the same time (the trackers run in
    // lock-step). Thread: analysis. Allocates: no. Locks: no.
    const EnsembleReading& process(std::span<const PitchFrame> frames, std::int64_t sample_index) noexcept;

    const EnsembleReading& reading() const noexcept { return out_; }
    const Chord& chord() const noexcept { return chord_; }
    const std::vector<Player>& players() const noexcept { return players_; }
    const EnsembleConfig& config() const noexcept { return cfg_; }
    const Ratio& player_ratio(std::size_t player) const {
        return ratio_.at(player);
    }  // the voice above the root (chord octave)

private:
    Chord chord_;
    std::vector<Player> players_;
    EnsembleConfig cfg_;
    std::vector<std::unique_ptr<ReadingMaker>> makers_;
    std::vector<Ratio> ratio_;  // per player: the voice's ratio
    ChannelChecks checks_;
    std::vector<double> f0_, level_, voice_f_, voice_w_, voice_logsum_;
    std::vector<double> voice_cents_;  // per chord voice: cents above the root
    EnsembleReading out_;
};

}  // namespace beatless::pitch
