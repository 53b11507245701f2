// The look of Lode's cell styles (report_model.hpp's styles::), which the writer (report_uno.cpp)
// creates in the workbook. UNO-free.
#pragma once

#include "report_model.hpp"

#include <cstdint>

namespace lode::addin::report {

// Colours as 0xRRGGBB; -1 = leave as the default style has it.
struct StyleLook {
  const char* name;
  std::int32_t back = -1, color = -1;
  bool bold = false, italic = false, wrap = false;
  float height = 0;
  const char* format = nullptr;
};
// Lode's own palette: moss and sage for structure, amber for strong loadings, brick for flags.
inline const StyleLook kLooks[] = {
    {styles::title, -1, 0x2E4A3B, true, false, false, 14.0f, nullptr},
    {styles::heading, 0xDCE8D2, 0x1F3328, true, false, false, 0, nullptr},
    {styles::label, -1, 0x1F3328, false, false, false, 0, nullptr},
    {styles::number, -1, -1, false, false, false, 0, "0.000"},
    {styles::salient, 0xF5D38A, 0x3A2A00, true, false, false, 0, "0.000"},
    {styles::faint, -1, 0xA3A3A3, false, false, false, 0, "0.000"},
    {styles::flag, -1, 0xA23B2A, true, false, false, 0, nullptr},
    {styles::note, -1, 0x5A5A5A, false, true, false, 0, nullptr},
    {styles::caution, 0xFBE3D6, 0x5C2A1A, false, false, false, 0, nullptr},
};


}  // namespace lode::addin::report
