// Reading the arguments of a cell function: option words, whole numbers, flags, and the data
// argument (answers or a correlation matrix). UNO-free.
#pragma once

#include "cells.hpp"

#include <cstdint>
#include <initializer_list>
#include <string>

namespace lode::addin {

// A text option: one of `choices` (case-insensitive; arg_from_value has trimmed the white space around
// it, as the C ABI's name lookups do), or the first choice (index 0) when left out.
int choice(const Arg& a, const char* name, std::initializer_list<const char*> choices);

// The same, also reading a former word (a word a renamed option had, kept so saved workbooks still
// compute) as the choice at index `former_index`; error messages name only the current words.
struct FormerWord {
  const char* word;
  int index;
};
int choice(const Arg& a, const char* name, std::initializer_list<const char*> choices, FormerWord former);

// A whole number in [lo, hi], or `fallback` when left out.
std::int64_t whole(const Arg& a, const char* name, std::int64_t fallback, std::int64_t lo, std::int64_t hi);

// A yes/no option: TRUE/FALSE, 1/0, or left out (= fallback).
bool flag(const Arg& a, const char* name, bool fallback);

// The data argument: raw responses, or a correlation matrix (square, symmetric, ones on the
// diagonal, every cell a number in [-1, 1]).
struct Input {
  const Grid* grid = nullptr;
  bool is_correlation = false;
};

// How a square block of numbers reads: the reason it is refused as almost a correlation matrix
// (empty when it is not), and whether it is one (README, "Using them"; rule in arguments.cpp).
std::string classify_square(const Grid& g, bool& is_correlation);

// The data argument `name`: refused when it holds no numbers or is almost a correlation matrix.
Input read_input(const Arg& a, const char* name);

}  // namespace lode::addin
