// Palette — every colour the screens use, defined in this one place, packed as ImGui's IM_COL32 (R, G, B, A bytes).
// Method: the eight hues of M. Okabe and K. Ito, "Color Universal Design (CUD): how to make figures and presentations
// that are friendly to colorblind people" (J*FLY, 2008); the neutrals ours. No state is told by colour alone.
// Thread: any (constants). Allocates: no.
#pragma once

#include "ui/render/raster.h"

#include <cstdint>

namespace beatless::ui::palette {

// --- Okabe & Ito (2008) -------------------------------------------------------
inline constexpr std::uint32_t kOrange = rgba(230, 159, 0);
inline constexpr std::uint32_t kSkyBlue = rgba(86, 180, 233);
inline constexpr std::uint32_t kBluishGreen = rgba(0, 158, 115);
inline constexpr std::uint32_t kYellow = rgba(240, 228, 66);
inline constexpr std::uint32_t kBlue = rgba(0, 114, 178);
inline constexpr std::uint32_t kVermillion = rgba(213, 94, 0);
inline constexpr std::uint32_t kReddishPurple = rgba(204, 121, 167);

// --- Neutrals (ours) -------------------------------------------------------------
// A dark, calm background with near-white text, for high contrast on a stage or at a music stand.
inline constexpr std::uint32_t kBackground = rgba(15, 17, 21);    // behind everything
inline constexpr std::uint32_t kPanel = rgba(24, 27, 33);         // panels: lane, trace, beat cue
inline constexpr std::uint32_t kPanelRaised = rgba(36, 40, 48);   // controls, the lane band
inline constexpr std::uint32_t kGrid = rgba(70, 76, 88);          // ticks and minor lines
inline constexpr std::uint32_t kText = rgba(238, 240, 243);       // body text and readouts
inline constexpr std::uint32_t kTextDim = rgba(165, 171, 182);    // labels, units, hints
inline constexpr std::uint32_t kTextFaint = rgba(110, 116, 128);  // disabled

// --- Roles ------------------------------------------------------------------------
// No state is told by colour alone: each role's shape and word is beside it (sharp: orange, an upward triangle,
// "sharp"; flat: sky blue, a downward triangle, "flat"; in tune: bluish green, a disc, "in tune"); the drone's
// state is a word and a filled or hollow square.
inline constexpr std::uint32_t kSharp = kOrange;                    // + the ▲ shape and "sharp"
inline constexpr std::uint32_t kFlat = kSkyBlue;                    // + the ▼ shape and "flat"
inline constexpr std::uint32_t kInTune = kBluishGreen;              // + the ● shape and "in tune"
inline constexpr std::uint32_t kInTuneZone = rgba(20, 62, 52);      // the lane's in-tune window (a dark bluish green)
inline constexpr std::uint32_t kCentreMarker = kText;               // vibrato centre: a hollow diamond below the lane
inline constexpr std::uint32_t kCurrentTarget = kYellow;            // the current target's line and label in the trace
inline constexpr std::uint32_t kOtherTarget = rgba(128, 134, 146);  // the other targets' lines
inline constexpr std::uint32_t kTraceLine = kText;                  // pitch in the trace
inline constexpr std::uint32_t kPulse = kReddishPurple;             // the beat cue's pulse
inline constexpr std::uint32_t kClip = kVermillion;                 // + the word "CLIP"
inline constexpr std::uint32_t kLevelHot = kYellow;                 // input above -6 dBFS
inline constexpr std::uint32_t kLevelOk = rgba(190, 196, 206);      // input level bar
inline constexpr std::uint32_t kWarning = kVermillion;              // + a word: overflows, lost devices, caution border
inline constexpr std::uint32_t kAccent = kBlue;                     // active tab, pressed buttons
inline constexpr std::uint32_t kDroneOn = kBluishGreen;             // + "Drone on" and a filled square
inline constexpr std::uint32_t kRecording = kVermillion;            // + a filled dot, "REC", the time and the take

// The same colour with another alpha (0..255).
constexpr std::uint32_t with_alpha(std::uint32_t c, unsigned a) { return (c & 0x00FFFFFFu) | (a << 24); }

}  // namespace beatless::ui::palette
