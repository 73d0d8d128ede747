#include "pitch/measure/ensemble_analyzer.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/beats.h"
#include "pitch/theory/interval.h"

#include <algorithm>
#include <cassert>
#include <cmath>
#include <numeric>

namespace beatless::pitch {

// ---------------------------------------------------------------------------
// [SECTION] Names
// ---------------------------------------------------------------------------

std::string_view reference_key(ChordReference r) {
    switch (r) {
        case ChordReference::fixed_root: return "drone";
        case ChordReference::sounding_bass: return "bass";
        case ChordReference::best_fit: return "best-fit";
    }
    return "drone";
}

ChordReference parse_reference(std::string_view key) {
    const std::string_view k = trim(key);
    if (k == "drone" || k == "fixed" || k == "root") return ChordReference::fixed_root;
    if (k == "bass") return ChordReference::sounding_bass;
    if (k == "best-fit" || k == "best_fit" || k == "bestfit") return ChordReference::best_fit;
    throw Error("reference " + quote(key) + ": expected drone, bass or best-fit");
}

void check_players(const Chord& chord, std::span<const Player> players, int channels_available) {
    if (players.empty()) throw Error("ensemble: no players");
    if (players.size() > kMaxPlayers)
        throw Error("ensemble: " + std::to_string(players.size()) + " players; at most " + std::to_string(kMaxPlayers));
    for (std::size_t i = 0; i < players.size(); ++i) {
        const Player& p = players[i];
        const std::string who = "player " + std::to_string(i + 1) + (p.name.empty() ? "" : " (" + p.name + ")");
        if (p.voice >= chord.size())
            throw Error(who + ": voice " + std::to_string(p.voice + 1) + " is not in the chord " + chord.terms_text() +
                        " (voices 1 to " + std::to_string(chord.size()) + ")");
        if (p.channel < 0 || p.channel >= channels_available)
            throw Error(who + ": channel " + std::to_string(p.channel + 1) + " does not exist (channels 1 to " +
                        std::to_string(channels_available) + ")");
        for (std::size_t j = 0; j < i; ++j)
            if (players[j].channel == p.channel)
                throw Error(who + ": channel " + std::to_string(p.channel + 1) + " is already player " +
                            std::to_string(j + 1) + "'s; give each player a channel of their own");
    }
}

// ---------------------------------------------------------------------------
// [SECTION] EnsembleAnalyzer
// ---------------------------------------------------------------------------

namespace {

ChannelChecksConfig checks_for(const EnsembleConfig& c) {
    ChannelChecksConfig k = c.checks;
    k.hop_s = c.hop_s;
    return k;
}

// 2^k as an integer factor for |k| <= 20; k is a player's octave shift.
std::int64_t pow2(int k) { return std::int64_t{1} << std::clamp(k, 0, 20); }

}  // namespace

EnsembleAnalyzer::EnsembleAnalyzer(const Chord& chord, std::vector<Player> players, const EnsembleConfig& config)
    : chord_(chord),
      players_(std::move(players)),
      cfg_(config),
      checks_(std::max<std::size_t>(1, players_.size()), checks_for(config)) {
    check_players(chord_, players_, 64);
    ReadingConfig rc = cfg_.reading;
    rc.root_hz = cfg_.root_hz;
    rc.a4_hz = cfg_.a4_hz;
    rc.octave_equivalent = true;
    rc.vibrato.hop_s = cfg_.hop_s;
    for (std::size_t i = 0; i < players_.size(); ++i) {
        TargetSet one;
        one.id = "voice-" + std::to_string(players_[i].voice + 1);
        one.targets.push_back({Interval::of(chord_.voice_ratio(players_[i].voice)), players_[i].name});
        makers_.push_back(std::make_unique<ReadingMaker>(rc, std::move(one)));
        ratio_.push_back(chord_.voice_ratio(players_[i].voice));
    }
    f0_.assign(players_.size(), 0.0);
    level_.assign(players_.size(), -INFINITY);
    voice_f_.assign(chord_.size(), NAN);
    voice_w_.assign(chord_.size(), 0.0);
    voice_logsum_.assign(chord_.size(), 0.0);
    for (std::size_t v = 0; v < chord_.size(); ++v) voice_cents_.push_back(chord_.voice_ratio(v).cents());
    out_.players = static_cast<int>(players_.size());
    out_.root_hz.fill(NAN);
    out_.root_hz[reference_index(ChordReference::fixed_root)] = cfg_.root_hz;
}

EnsembleAnalyzer::~EnsembleAnalyzer() = default;

const EnsembleReading& EnsembleAnalyzer::process(std::span<const PitchFrame> frames,
                                                 std::int64_t sample_index) noexcept {
    assert(frames.size() == players_.size() && "EnsembleAnalyzer::process: one frame per player");
    const std::size_t n = players_.size();
    const double r0 = cfg_.root_hz;
    out_.t_s = n ? frames[0].t_s : 0.0;
    out_.sample_index = sample_index;

    // Per player: the reading against the fixed root, and the channel checks.
    for (std::size_t i = 0; i < n; ++i) {
        const Reading r = makers_[i]->make(frames[i], sample_index);
        PlayerReading& p = out_.p[i];
        p.f0_hz = r.f0_hz;
        p.centre_f0_hz = r.centre_f0_hz;
        p.confidence = r.confidence;
        p.level_dbfs = r.level_dbfs;
        p.target_cents = r.target_cents;
        p.octaves = r.target_octaves;
        p.dev_cents = r.dev_cents;
        p.centre_dev_cents = r.centre_dev_cents;
        p.steadiness_cents = r.steadiness_cents;
        p.clipped = r.clipped;
        p.copy_of = -1;
        p.near_voice = -1;
        f0_[i] = r.f0_hz;
        level_[i] = frames[i].level_dbfs;
    }
    checks_.push(f0_.data(), level_.data());
    for (std::size_t i = 0; i < n; ++i) {
        PlayerReading& p = out_.p[i];
        if (checks_.silent(i)) {
            p.state = PlayerState::silent;
        } else if (checks_.copy_of(i) >= 0) {
            p.state = PlayerState::copy;
            p.copy_of = checks_.copy_of(i);
        } else if (p.f0_hz > 0.0 && std::isfinite(p.centre_f0_hz) && std::isfinite(p.centre_dev_cents)) {
            p.state = PlayerState::sounding;
        } else {
            p.state = PlayerState::resting;
        }
    }

    // The voices as they sound: each sounding player's centre folded into the
    // chord's octave; a doubled voice is the geometric mean of its players,
    // weighted by their number (the same least-squares sum as per player).
    auto gather = [&] {
        std::fill(voice_w_.begin(), voice_w_.end(), 0.0);
        std::fill(voice_logsum_.begin(), voice_logsum_.end(), 0.0);
        for (std::size_t i = 0; i < n; ++i) {
            const PlayerReading& p = out_.p[i];
            if (p.state != PlayerState::sounding) continue;
            const std::size_t v = players_[i].voice;
            voice_logsum_[v] += std::log2(p.centre_f0_hz) - static_cast<double>(p.octaves);
            voice_w_[v] += 1.0;
        }
        for (std::size_t v = 0; v < chord_.size(); ++v)
            voice_f_[v] = voice_w_[v] > 0.0 ? std::exp2(voice_logsum_[v] / voice_w_[v]) : NAN;
        return reference_root_hz(chord_, ChordReference::best_fit, r0, voice_f_, voice_w_);
    };
    double best = gather();
    // Another note: far from the group's median deviation (a robust first
    // estimate: one player on a wrong note would pull a least-squares fit
    // towards them and every other player away from it).
    bool moved = false;
    std::array<double, kMaxPlayers> devs{};
    std::size_t nd = 0;
    for (std::size_t i = 0; i < n; ++i)
        if (out_.p[i].state == PlayerState::sounding) devs[nd++] = out_.p[i].centre_dev_cents;
    if (std::isfinite(best) && nd > 0) {
        for (std::size_t a = 1; a < nd; ++a)  // insertion sort: at most 8 values
            for (std::size_t b = a; b > 0 && devs[b - 1] > devs[b]; --b) std::swap(devs[b - 1], devs[b]);
        const double off = nd % 2 ? devs[nd / 2] : 0.5 * (devs[nd / 2 - 1] + devs[nd / 2]);
        for (std::size_t i = 0; i < n; ++i) {
            PlayerReading& p = out_.p[i];
            if (p.state == PlayerState::sounding && std::fabs(p.centre_dev_cents - off) > cfg_.off_voice_cents) {
                p.state = PlayerState::off_voice;
                moved = true;
            }
        }
    }
    if (moved) best = gather();
    // Another note: the voice it sits near (octave-equivalent), measured from
    // the best-fit root when there is one, else from the drone.
    const double fit_off = std::isfinite(best) ? 1200.0 * std::log2(best / r0) : 0.0;
    for (std::size_t i = 0; i < n; ++i) {
        PlayerReading& p = out_.p[i];
        if (p.state != PlayerState::off_voice) continue;
        const double c = 1200.0 * std::log2(p.centre_f0_hz / r0) - fit_off;
        double best_d = cfg_.near_voice_cents;
        for (std::size_t v = 0; v < voice_cents_.size(); ++v) {
            const double d = std::fabs(std::remainder(c - voice_cents_[v], 1200.0));
            if (v != players_[i].voice && d <= best_d) {
                best_d = d;
                p.near_voice = static_cast<int>(v);
            }
        }
    }
    out_.root_hz[reference_index(ChordReference::fixed_root)] = r0;
    out_.root_hz[reference_index(ChordReference::best_fit)] = best;
    out_.root_hz[reference_index(ChordReference::sounding_bass)] =
        reference_root_hz(chord_, ChordReference::sounding_bass, r0, voice_f_, voice_w_);

    // Beats between every two players at their centres.
    for (std::size_t a = 0; a < n; ++a) {
        for (std::size_t b = a + 1; b < n; ++b) {
            PairBeat& pb = out_.pairs[player_pair_index(a, b, n)];
            pb = PairBeat{};
            const PlayerReading& pa = out_.p[a];
            const PlayerReading& pq = out_.p[b];
            // The just interval f_b / f_a as the players sing it (octaves included).
            const Ratio& ra = ratio_[a];
            const Ratio& rb = ratio_[b];
            std::int64_t num = rb.num * ra.den * pow2(pq.octaves - pa.octaves);
            std::int64_t den = rb.den * ra.num * pow2(pa.octaves - pq.octaves);
            const std::int64_t g = std::gcd(num, den);
            num /= g;
            den /= g;
            // f_b / f_a = num / den. The pair a listener hears comes from the
            // one rule for audible pairs (pitch/theory/beats.h), with the lower
            // player as tone a: the own pair while its partials are present
            // (both voices up to max_beat_partial) and below 4 kHz, else a
            // simpler nearby pair, else none.
            const bool a_low = num >= den;
            const std::int64_t hi = a_low ? num : den, lo = a_low ? den : num;
            const double f_lo = r0 * static_cast<double>(a_low ? ra.num : rb.num) /
                                static_cast<double>(a_low ? ra.den : rb.den) *
                                std::exp2(a_low ? pa.octaves : pq.octaves);
            const double f_hi = f_lo * static_cast<double>(hi) / static_cast<double>(lo);
            AudibleRange range;
            range.partials_a = cfg_.max_beat_partial;
            range.partials_b = cfg_.max_beat_partial;
            const AudiblePair ap =
                audible_pair(f_lo, f_hi, 1200.0 * std::log2(static_cast<double>(hi) / static_cast<double>(lo)),
                             Ratio{hi, lo}, range);
            if (!ap.found) continue;
            pb.partial_a = static_cast<std::int16_t>(a_low ? ap.partial_a : ap.partial_b);
            pb.partial_b = static_cast<std::int16_t>(a_low ? ap.partial_b : ap.partial_a);
            if (pa.state == PlayerState::sounding && pq.state == PlayerState::sounding)
                pb.beat_hz = std::fabs(static_cast<double>(pb.partial_a) * pa.centre_f0_hz -
                                       static_cast<double>(pb.partial_b) * pq.centre_f0_hz);
        }
    }
    return out_;
}

}  // namespace beatless::pitch
