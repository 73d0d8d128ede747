// PNG output — writes an RGBA8 pixel buffer as a PNG file.
//
// Encodes with stb_image_write (libstb-dev, compiled implementation) into
// memory, then writes the file itself so every failure is reported: the
// error names the file and the reason, "out.png: cannot be written (No such
// file or directory)". Colour type 6 (RGBA, 8 bits per channel), PNG
// specification (W3C / ISO/IEC 15948).
#pragma once

#include "ui/render/raster.h"

#include <string>

namespace beatless::ui {

// The PNG file's bytes for `image`. Throws RenderError naming `name` when the image is empty.
std::string encode_png(const PixelBuffer& image, const std::string& name);
// Writes `image` to `path` directly (tests; the program writes through ui/session/safe_file.h).
// Throws RenderError naming the file on any failure.
void write_png(const std::string& path, const PixelBuffer& image);

}  // namespace beatless::ui
