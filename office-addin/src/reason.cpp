// LODE.REASON: why a Lode formula fails, read from the sheet. Calc shows every failure of an add-in
// function as one of a few error values (Err:502, Err:523, #NUM!), and the message is lost; this
// function runs the named function again with the same arguments and returns its message as text.
// It keeps no state of its own (the shared cache is the one every formula uses), so it recalculates
// with its arguments and is as thread-safe as the function it names. UNO-free.
#include "functions.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <exception>
#include <string>

namespace lode::addin {
namespace {

std::string upper(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return static_cast<char>(std::toupper(c)); });
  return s;
}

Output text(std::string t) { return Output{1, 1, true, {OutCell::of(std::move(t))}}; }

// A range parameter given one cell arrives here as a value (an `any` argument's single cell is read as
// its value); the named function would have seen a one-cell range.
Arg as_range(const Arg& a) {
  if (a.kind != Arg::Kind::number && a.kind != Arg::Kind::text) return a;
  Arg g;
  g.kind = Arg::Kind::grid;
  g.grid.rows = g.grid.cols = 1;
  g.grid.values = {a.kind == Arg::Kind::number ? a.number : kMissing};
  g.grid.number_cells = a.kind == Arg::Kind::number ? 1 : 0;
  return g;
}

}  // namespace

std::string failure_words(Failure failure) {
  switch (failure) {
    case Failure::bad_argument:
    case Failure::too_large: return "Err:502";
    case Failure::not_converged: return "Err:523";
    case Failure::not_computable: return "#NUM!";
    case Failure::internal: return "#VALUE!";
  }
  return "an error";
}

std::string reason_text(Failure failure, const std::string& message) {
  return failure_words(failure) + ": " + message;
}

Output fn_reason(const Call& call) {
  const Arg& name = call.args.at(0);
  if (name.kind != Arg::Kind::text || name.text.empty())
    throw CellError(Failure::bad_argument,
                    "'function' must be the name of a Lode function as text, e.g. \"LODE.LOADINGS\"");
  std::string display = upper(name.text);
  if (display.rfind("LODE.", 0) != 0) display = "LODE." + display;
  const FunctionSpec* f = find_by_display(display);
  if (f == nullptr || f->compute == &fn_reason)
    throw CellError(Failure::bad_argument, "'function': Lode has no function " + name.text);
  const std::size_t given = call.args.size() - 1;
  for (std::size_t i = f->args.size(); i < given; ++i)
    if (call.args[1 + i].kind != Arg::Kind::missing)
      return text(std::string(f->display) + " takes " + std::to_string(f->args.size()) + " arguments; more were given");
  // A function with more arguments than LODE.REASON passes on gets the rest left out (a required one
  // among them is named below); the table's widest function has as many as LODE.REASON passes on.
  const Arg left_out{};
  std::vector<Arg> args;
  for (std::size_t i = 0; i < f->args.size(); ++i) {
    const Arg& a = i < given ? call.args[1 + i] : left_out;
    if (f->args[i].kind == ArgKind::range && a.kind == Arg::Kind::missing)
      return text(std::string(f->display) + " needs its argument '" + std::string(f->args[i].name) + "'");
    args.push_back(f->args[i].kind == ArgKind::range ? as_range(a) : a);
  }
  try {
    const Output out = f->compute(Call{args, call.cache, call.deadline});
    const auto failed = std::count_if(out.cells.begin(), out.cells.end(), [](const OutCell& c) { return c.error.has_value(); });
    if (failed == 0) return text("no failure: " + std::string(f->display) + " computes with these arguments");
    return text(std::string(f->display) + " computes; " + std::to_string(failed) + " of its cells show " +
                failure_words(*std::find_if(out.cells.begin(), out.cells.end(), [](const OutCell& c) {
                  return c.error.has_value();
                })->error) +
                " (" + std::string(f->errors) + ")");
  } catch (...) {
    const auto [failure, message] = failure_of(std::current_exception());
    return text(reason_text(failure, message));
  }
}

}  // namespace lode::addin
