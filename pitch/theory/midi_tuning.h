// MIDI tuning — the bytes that retune a synth: MTS frequency words, the bulk
// tuning dump, the real-time single-note tuning change, and pitch bend.
//
// MIDI Tuning Standard (MIDI Manufacturers Association, MIDI 1.0 Detailed
// Specification 4.2, "MIDI Tuning Messages"; CA-020/CA-021/RP-020): a
// frequency is three bytes xx yy zz, the equal-tempered semitone xx at or
// below it (note 69 = 440 Hz, fixed by the standard) and a 14-bit fraction
// of a semitone (yy << 7 | zz) in units of 100/16384 = 0.0061 cents.
// Pitch bend: MIDI 1.0, a 14-bit value centred at 8192 spanning +-range.
// Pure computation; any thread.
#pragma once

#include <array>
#include <cstdint>
#include <span>
#include <string_view>
#include <vector>

namespace beatless::pitch {

inline constexpr double kMtsA4Hz = 440.0;                    // the standard's fixed reference, whatever the user's A4
inline constexpr double kMtsCentsPerStep = 100.0 / 16384.0;  // 0.0061 cents

struct MtsWord {
    std::uint8_t semitone = 0;  // xx: MIDI note 0-127 at or below the frequency
    std::uint8_t msb = 0;       // yy: upper 7 bits of the 14-bit fraction
    std::uint8_t lsb = 0;       // zz: lower 7 bits
    std::uint16_t fraction() const { return static_cast<std::uint16_t>(msb << 7 | lsb); }
};

// The MTS word nearest to freq_hz (rounded to the 0.0061-cent step). Below
// note 0 gives 00 00 00 and above the top 7F 7F 7E (7F 7F 7F means "no
// change" in the standard), so the result is always a valid tuning.
MtsWord mts_word(double freq_hz);
// The frequency an MTS word stands for: 440 * 2^((xx + fraction/16384 - 69) / 12).
double mts_freq_hz(MtsWord w);

// Bulk tuning dump, non-real-time: F0 7E dev 08 01 program name[16]
// 128 x (xx yy zz) checksum F7, 408 bytes. The checksum is the XOR of the
// bytes from 7E to the last data byte, masked to 7 bits. The name is padded
// with spaces and cut to 16 characters; bytes outside 0x20-0x7E become '?'.
inline constexpr std::size_t kMtsBulkDumpBytes = 408;
std::vector<std::uint8_t> mts_bulk_dump(std::uint8_t device_id, std::uint8_t program, std::string_view name,
                                        std::span<const double, 128> freq_hz);

// Real-time single-note tuning change: F0 7F dev 08 02 program count
// count x (key xx yy zz) F7. At most 127 changes a message.
struct MtsNoteChange {
    std::uint8_t key = 0;  // MIDI key 0-127 being retuned
    double freq_hz = 0.0;  // its new frequency
};
std::vector<std::uint8_t> mts_single_note_change(std::uint8_t device_id, std::uint8_t program,
                                                 std::span<const MtsNoteChange> changes);

// 14-bit pitch bend (0..16383, centre 8192) moving a note by bend_cents with
// the receiver's bend range set to range_semitones: 8192 + round(8192 *
// bend_cents / (100 * range)), clamped to 0..16383 (+range is just short of
// 16384). `exact` says whether the bend fitted without clamping.
struct PitchBend {
    std::uint16_t value = 8192;
    bool exact = true;
};
PitchBend pitch_bend(double bend_cents, double range_semitones);

// A frequency as an equal-tempered key (A4 = 440 Hz) plus a bend, for
// receivers without MTS: the nearest key, and the cents from it (-50..+50).
struct KeyAndBend {
    int key = 69;
    double bend_cents = 0.0;
};
KeyAndBend key_and_bend(double freq_hz);

}  // namespace beatless::pitch
