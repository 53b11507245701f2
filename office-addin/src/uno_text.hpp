// Text between UNO and the add-in's plain C++: OUString <-> UTF-8, and column letters of a sheet
// column, defined once for every UNO source of the add-in.
#pragma once

#include "report_model.hpp"  // column_name: the letters are defined once, UNO-free

#include <rtl/ustring.hxx>
#include <sal/types.h>

#include <string>
#include <string_view>

namespace lode::addin {

inline rtl::OUString ustr(std::string_view s) {
  return rtl::OUString(s.data(), static_cast<sal_Int32>(s.size()), RTL_TEXTENCODING_UTF8);
}
inline std::string utf8(const rtl::OUString& s) { return std::string(rtl::OUStringToOString(s, RTL_TEXTENCODING_UTF8).getStr()); }

// "A", "B", ..., "AA", ... of a 0-based sheet column.
inline std::string column_letters(sal_Int32 col) { return report::column_name(static_cast<std::size_t>(col)); }

}  // namespace lode::addin
