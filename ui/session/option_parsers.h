// Parsers of command-line values with a syntax of their own, shared by the
// commands and the screens' options (and fuzzed: tests/fuzz/fuzz_options.cpp).
// Each returns the value in range or throws Error naming the text.
// Thread: any.
#pragma once

#include <string>

namespace beatless::ui {

// --lowest NOTE|HZ: the live tracker's lowest f0, 30 to 200 Hz (kLowestMinHz..kLowestMaxHz).
double parse_lowest(const std::string& text, double a4_hz);
// snapshot --size: "WIDTHxHEIGHT" between 320x240 and 7680x4320.
void parse_size(const std::string& text, int& width_px, int& height_px);

}  // namespace beatless::ui
