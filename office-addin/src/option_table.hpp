// The analysis's options in one table: for each word option of the report service and dialog, its
// property name, the words it accepts with their labels, its default, its help and where it lands in
// Options. The table drives validate(), the service's parsing (report_uno.cpp), the dialog's lists
// (dialog.cpp) and the run record (layout_record.cpp). UNO-free.
#pragma once

#include "defaults.hpp"
#include "report_model.hpp"

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace lode::addin {


namespace report {

struct OptionWord {
  const char* word;   // the option word ("ml")
  const char* label;  // the dialog's words for it ("Maximum likelihood")
};

struct WordOption {
  const char* property;             // the service's property and the dialog control ("Extraction")
  const char* label;                // the dialog's label ("Put the scores")
  const char* record;               // the run record's key ("Factor scores placed")
  std::vector<OptionWord> words;    // accepted, in the dialog's order
  const char* fallback;             // the default word (one of `words`)
  const char* help;                 // the dialog's tooltip
  std::string Options::*field;      // where the word goes
};

// An extra that a check box switches on, with its number (0 = off): the service's property, the
// dialog's words, the run record's key, the number the dialog proposes with its range, and the help.
struct CheckOption {
  const char* property;     // the service's property and the dialog's check box ("Holdout")
  const char* label;        // the check box's words
  const char* number_label; // the words beside its number field
  const char* record;       // the run record's key
  double on_value;          // the number the dialog proposes (the C ABI's default)
  double lo, hi;            // the dialog's range for it
  short decimals;
  const char* help;         // the dialog's tooltip
};
// The extras with their own sheet (the confirmatory check, replication), in the dialog's order.
const std::vector<CheckOption>& check_options();
// The options that are not a choice of words: their property, the dialog's label, the run record's key
// and the help (option_table.cpp).
struct ValueOption {
  const char* property;
  const char* label;
  const char* record;
  const char* help;
};
// A column of the range naming each respondent's group ("" or left out: no comparison); the smallest group.
extern const ValueOption kGroupColumnOption;
extern const ValueOption kMinGroupOption;

// One named value of the service's options as plain C++ (report_uno.cpp converts UNO's values).
struct OptionValue {
  enum class Kind { other, text, integer, number, list } kind = Kind::other;
  std::string name;
  std::string text;                // text
  std::int64_t integer = 0;        // integer
  double number = 0.0;             // integer and number
  std::vector<std::string> list;   // list of texts
};

// The options the named values ask for (any left out keep their default): word options through the
// table, the numbers checked by range. Throws std::invalid_argument naming a bad or unknown option.
Options options_from(const std::vector<OptionValue>& values);

// Every word option, in the dialog's order.
const std::vector<WordOption>& word_options();
// The option of a property name, or nullptr.
const WordOption* find_word_option(std::string_view property);
// The current word for `word` (a former word of a renamed option word maps to its new one).
std::string current_word(const WordOption& option, const std::string& word);
// The dialog's labels of the option's words, in order.
std::vector<std::string> word_labels(const WordOption& option);
// The index of `word` among the option's words (the default's when absent).
std::size_t word_index(const WordOption& option, std::string_view word);

}  // namespace report
}  // namespace lode::addin
