// The one declarative table of Lode's cell functions. Everything Calc learns about a function comes
// from its row: the UNO interface (IDL and method declarations are generated from this table at
// build time by gen_main.cpp), the display name users type, the Function Wizard's description and
// argument help, the category. Adding a function = one row here + its compute function (functions.cpp).
#pragma once

#include "cache.hpp"
#include "cells.hpp"

#include <string_view>
#include <vector>

namespace lode::addin {

// `range`: a required range argument (UNO sequence<sequence<any>>; text and empty cells = missing).
// `value`: an optional argument (UNO any; left out = missing); it may also be given a range.
enum class ArgKind { range, value };

struct ArgSpec {
  std::string_view name;  // shown in the Function Wizard; also the IDL parameter name
  ArgKind kind;
  std::string_view help;
};

// What a compute function gets: the arguments as typed (missing ones included, in table order),
// the component's cache of analyses, and the formula's deadline (set when the call starts; every
// stage of the computation checks it).
struct Call {
  const std::vector<Arg>& args;
  ResultCache& cache;
  Deadline deadline{};
};

using ComputeFn = Output (*)(const Call& call);

struct FunctionSpec {
  std::string_view method;       // method of org.lode.calc.XCellFunctions; stored in saved files: never rename
  std::string_view display;      // the name users type, e.g. LODE.CORR
  std::string_view description;  // one sentence for the Function Wizard
  std::vector<ArgSpec> args;
  std::string_view result;  // what the cells hold (README table)
  std::string_view errors;  // the error values it can show beyond Err:502 for bad input (README table)
  ComputeFn compute;
};

// Programmatic and display category of every Lode function. Calc files a category it does not know
// under its own "Add-In" group (sc/source/core/tool/addincol.cxx, lcl_GetCategory).
inline constexpr std::string_view kCategory = "Add-In";
inline constexpr std::string_view kCategoryDisplay = "Lode";

const std::vector<FunctionSpec>& function_table();

// The row whose method or display name (case-insensitive) matches, or nullptr.
const FunctionSpec* find_by_method(std::string_view method);
const FunctionSpec* find_by_display(std::string_view display);

// The texts the office asks the add-in for, by method name ("" for an unknown method or argument).
enum class AddinText { display, description, argument_name, argument_help };
std::string addin_text(const std::string& method, AddinText what, long argument = 0);

}  // namespace lode::addin
