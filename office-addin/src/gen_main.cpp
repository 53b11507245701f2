// Build-time generator: prints the UNO IDL of Lode's cell-function interface and the C++ method
// declarations of the component, both from the declarative table (table.cpp), so the table is the
// only place a function is described.
//
//   lode_addin_gen idl <out.idl>
//   lode_addin_gen cpp <out.inc>
//   lode_addin_gen md <out.md>     (the README's table of cell functions)
#include "table.hpp"

#include <cctype>
#include <fstream>
#include <iostream>
#include <string>

namespace {

using lode::addin::ArgKind;
using lode::addin::function_table;

// UNO IDL identifiers take no underscores in these positions: n_obs -> nObs.
std::string idl_identifier(std::string_view name) {
  std::string out;
  bool upper = false;
  for (char c : name) {
    if (c == '_') {
      upper = true;
      continue;
    }
    out += upper ? static_cast<char>(std::toupper(static_cast<unsigned char>(c))) : c;
    upper = false;
  }
  return out;
}

int write_idl(std::ostream& out) {
  out << "// Generated from office-addin/src/table.cpp by lode_addin_gen. Do not edit.\n"
         "module org { module lode { module calc {\n"
         "interface XCellFunctions : com::sun::star::uno::XInterface\n{\n";
  for (const auto& f : function_table()) {
    out << "    any " << f.method << "(";
    bool first = true;
    for (const auto& a : f.args) {
      out << (first ? "" : ", ") << "[in] "
          << (a.kind == ArgKind::range ? "sequence< sequence< any > >" : "any") << " " << idl_identifier(a.name);
      first = false;
    }
    out << ");\n";
  }
  out << "};\n}; }; };\n";
  return 0;
}

int write_cpp(std::ostream& out) {
  out << "// Generated from office-addin/src/table.cpp by lode_addin_gen. Do not edit.\n"
         "// Included inside the component class: one override per table row, forwarding to invoke().\n";
  std::size_t index = 0;
  for (const auto& f : function_table()) {
    out << "css::uno::Any SAL_CALL " << f.method << "(";
    for (std::size_t i = 0; i < f.args.size(); ++i) {
      out << (i ? ", " : "")
          << (f.args[i].kind == ArgKind::range ? "const css::uno::Sequence<css::uno::Sequence<css::uno::Any>>& a"
                                               : "const css::uno::Any& a")
          << i;
    }
    out << ") override\n{\n    return invoke(" << index << ", {";
    for (std::size_t i = 0; i < f.args.size(); ++i) out << (i ? ", " : "") << "UnoArg(a" << i << ")";
    out << "});\n}\n";
    ++index;
  }
  return 0;
}

// The README's table of cell functions (README.md embeds it between markers; a test compares).
int write_markdown(std::ostream& out) {
  out << "| function | arguments | result | errors |\n| --- | --- | --- | --- |\n";
  for (const auto& f : function_table()) {
    out << "| `" << f.display << "` | ";
    bool first = true;
    for (const auto& a : f.args) {
      out << (first ? "" : "; ") << (a.kind == ArgKind::value ? "[" : "") << "`" << a.name << "`"
          << (a.kind == ArgKind::value ? "]" : "");
      first = false;
    }
    out << " | " << f.result << " | " << f.errors << " |\n";
  }
  return 0;
}

}  // namespace

int main(int argc, char** argv) {
  if (argc != 3) {
    std::cerr << "usage: lode_addin_gen idl|cpp|md <output file>\n";
    return 2;
  }
  std::ofstream out(argv[2]);
  if (!out) {
    std::cerr << "cannot write " << argv[2] << "\n";
    return 1;
  }
  const std::string what = argv[1];
  int rc = what == "idl" ? write_idl(out) : what == "cpp" ? write_cpp(out) : what == "md" ? write_markdown(out) : 2;
  out.close();
  if (!out) return 1;
  return rc;
}
