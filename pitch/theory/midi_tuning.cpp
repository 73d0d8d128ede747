#include "pitch/theory/midi_tuning.h"

#include "pitch/base/error.h"

#include <algorithm>
#include <cmath>

namespace beatless::pitch {

MtsWord mts_word(double freq_hz) {
    if (!(freq_hz > 0.0) || !std::isfinite(freq_hz)) return {};
    const double note = 69.0 + 12.0 * std::log2(freq_hz / kMtsA4Hz);
    // Whole 0.0061-cent steps above note 0; the top step 7F 7F 7F is reserved.
    const double steps = std::round(note * 16384.0);
    constexpr double kTop = 127.0 * 16384.0 + 16382.0;
    const auto s = static_cast<std::int64_t>(std::clamp(steps, 0.0, kTop));
    const auto frac = static_cast<std::uint16_t>(s % 16384);
    return {static_cast<std::uint8_t>(s / 16384), static_cast<std::uint8_t>(frac >> 7),
            static_cast<std::uint8_t>(frac & 0x7F)};
}

double mts_freq_hz(MtsWord w) { return kMtsA4Hz * std::exp2((w.semitone + w.fraction() / 16384.0 - 69.0) / 12.0); }

std::vector<std::uint8_t> mts_bulk_dump(std::uint8_t device_id, std::uint8_t program, std::string_view name,
                                        std::span<const double, 128> freq_hz) {
    std::vector<std::uint8_t> m;
    m.reserve(kMtsBulkDumpBytes);
    m.insert(m.end(), {0xF0, 0x7E, static_cast<std::uint8_t>(device_id & 0x7F), 0x08, 0x01,
                       static_cast<std::uint8_t>(program & 0x7F)});
    for (std::size_t i = 0; i < 16; ++i) {
        const char c = i < name.size() ? name[i] : ' ';
        m.push_back(c >= 0x20 && c <= 0x7E ? static_cast<std::uint8_t>(c) : '?');
    }
    for (double f : freq_hz) {
        const MtsWord w = mts_word(f);
        m.insert(m.end(), {w.semitone, w.msb, w.lsb});
    }
    std::uint8_t sum = 0;
    for (std::size_t i = 1; i < m.size(); ++i) sum ^= m[i];
    m.push_back(sum & 0x7F);
    m.push_back(0xF7);
    return m;
}

std::vector<std::uint8_t> mts_single_note_change(std::uint8_t device_id, std::uint8_t program,
                                                 std::span<const MtsNoteChange> changes) {
    if (changes.empty() || changes.size() > 127)
        throw Error("MTS single-note tuning change: " + std::to_string(changes.size()) +
                    " changes (1 to 127 a message)");
    std::vector<std::uint8_t> m = {0xF0,
                                   0x7F,
                                   static_cast<std::uint8_t>(device_id & 0x7F),
                                   0x08,
                                   0x02,
                                   static_cast<std::uint8_t>(program & 0x7F),
                                   static_cast<std::uint8_t>(changes.size())};
    for (const auto& c : changes) {
        const MtsWord w = mts_word(c.freq_hz);
        m.insert(m.end(), {static_cast<std::uint8_t>(c.key & 0x7F), w.semitone, w.msb, w.lsb});
    }
    m.push_back(0xF7);
    return m;
}

PitchBend pitch_bend(double bend_cents, double range_semitones) {
    if (!(range_semitones > 0.0) || !std::isfinite(bend_cents)) return {8192, false};
    const double v = 8192.0 + std::round(8192.0 * bend_cents / (100.0 * range_semitones));
    const double clamped = std::clamp(v, 0.0, 16383.0);
    return {static_cast<std::uint16_t>(clamped), clamped == v};
}

KeyAndBend key_and_bend(double freq_hz) {
    const double note = 69.0 + 12.0 * std::log2(freq_hz / kMtsA4Hz);
    const int key = std::clamp(static_cast<int>(std::lround(note)), 0, 127);
    return {key, (note - key) * 100.0};
}

}  // namespace beatless::pitch
