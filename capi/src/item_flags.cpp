// Items to look at through the C ABI: lode_item_flags_options and the lode_item_flags handle.
#include "boundary.hpp"
#include "keys.hpp"
#include "model.hpp"
#include "options.hpp"
#include "results.hpp"

#include "lode/item_flags.hpp"

using namespace lode;
using namespace lode::capi;

struct lode_item_flags {
  std::vector<ItemFlag> flags;
  ItemFlagOptions options;  // as used
  Vector communalities;     // what the flags were judged on
  Index items = 0;
};

namespace {

constexpr Code<ItemFlagKind> flag_codes[] = {
    {LODE_FLAG_CROSS_LOADING, ItemFlagKind::cross_loading},
    {LODE_FLAG_NO_SALIENT_LOADING, ItemFlagKind::no_salient_loading},
    {LODE_FLAG_LOW_COMMUNALITY, ItemFlagKind::low_communality},
    {LODE_FLAG_HEYWOOD_CASE, ItemFlagKind::heywood_case},
};

// lode_item_flags_options: field, default (from the core's ItemFlagOptions: common practice, see
// item_flags.hpp).
#define LODE_ITEM_FLAGS_OPTIONS_FIELDS(F)         \
  F(salient, core.salient)                        \
  F(cross_loading_gap, core.cross_loading_gap)    \
  F(low_communality, core.low_communality)        \
  F(heywood_uniqueness, core.heywood_uniqueness)

LODE_OPTIONS_FUNCTIONS(lode_item_flags_options, LODE_ITEM_FLAGS_OPTIONS_FIELDS, ItemFlagOptions, item_flags_defaults,
                       merged_item_flags_options)

Vector codes_of(const lode_item_flags& f) {
  Vector codes = Vector::Zero(f.items);
  for (const auto& g : f.flags)
    codes(g.item) = static_cast<double>(static_cast<int>(codes(g.item)) | c_code(flag_codes, g.kind));
  return codes;
}

// One row per flag: item, kind, first factor, second factor (-1 where none), value. An empty table is
// 0 x 5: its size query works, and any buffer (even NULL with capacity 0) takes it.
Matrix table_of(const lode_item_flags& f) {
  Matrix t(static_cast<Index>(f.flags.size()), 5);
  for (std::size_t r = 0; r < f.flags.size(); ++r) {
    const auto& g = f.flags[r];
    const Index row = static_cast<Index>(r);
    t(row, 0) = static_cast<double>(g.item);
    t(row, 1) = c_code(flag_codes, g.kind);
    t(row, 2) = g.factors.size() > 0 ? static_cast<double>(g.factors[0]) : -1.0;
    t(row, 3) = g.factors.size() > 1 ? static_cast<double>(g.factors[1]) : -1.0;
    t(row, 4) = g.value;
  }
  return t;
}

double items_flagged(const lode_item_flags& f) {
  std::vector<bool> seen(static_cast<std::size_t>(f.items), false);
  for (const auto& g : f.flags) seen[static_cast<std::size_t>(g.item)] = true;
  double n = 0.0;
  for (bool b : seen) n += flag(b);
  return n;
}

constexpr HandleNames flags_handle{"lode_item_flags", "lode_item_flags", "flags"};

constexpr MatrixKey<lode_item_flags> flags_matrices[] = {
    {LODE_ITEM_FLAGS_CODES, [](const lode_item_flags& f) -> Matrix { return codes_of(f); }},
    {LODE_ITEM_FLAGS_TABLE, [](const lode_item_flags& f) -> Matrix { return table_of(f); }},
    {LODE_ITEM_FLAGS_COMMUNALITIES, [](const lode_item_flags& f) -> Matrix { return f.communalities; }},
};

constexpr ValueKey<lode_item_flags> flags_values[] = {
    {LODE_ITEM_FLAGS_COUNT, [](const lode_item_flags& f) { return number(static_cast<Index>(f.flags.size())); }},
    {LODE_ITEM_FLAGS_ITEMS_FLAGGED, [](const lode_item_flags& f) { return items_flagged(f); }},
    {LODE_ITEM_FLAGS_ITEMS, [](const lode_item_flags& f) { return number(f.items); }},
    {LODE_ITEM_FLAGS_SALIENT, [](const lode_item_flags& f) { return f.options.salient; }},
    {LODE_ITEM_FLAGS_CROSS_LOADING_GAP, [](const lode_item_flags& f) { return f.options.cross_loading_gap; }},
    {LODE_ITEM_FLAGS_LOW_COMMUNALITY, [](const lode_item_flags& f) { return f.options.low_communality; }},
    {LODE_ITEM_FLAGS_HEYWOOD_UNIQUENESS, [](const lode_item_flags& f) { return f.options.heywood_uniqueness; }},
};

// The notes of the flags, one per line, of every item (item < 0) or of one.
std::string notes_of(const lode_item_flags& f, Index item) {
  std::vector<std::string> lines;
  for (const auto& g : f.flags)
    if (item < 0 || g.item == item) lines.push_back(g.note);
  return join_lines(lines);
}

constexpr TextKey<lode_item_flags> flags_texts[] = {
    {LODE_ITEM_FLAGS_NOTES, [](const lode_item_flags& f) { return notes_of(f, -1); }},
};

}  // namespace

extern "C" {

LODE_OPTIONS_INIT(lode_item_flags_options, item_flags_defaults)

LODE_API int lode_item_flags_compute(const lode_model* model, const lode_item_flags_options* opts,
                                     lode_item_flags** out) {
  return compute_handle(model, "model", out, [&] {
    const lode_item_flags_options o = merged_item_flags_options(opts);
    ItemFlagOptions fo;
    fo.salient = o.salient;
    fo.cross_loading_gap = o.cross_loading_gap;
    fo.low_communality = o.low_communality;
    fo.heywood_uniqueness = o.heywood_uniqueness;
    fo.item_names = model->item_names;
    const Matrix phi = model->rotation.oblique ? model->rotation.factor_correlations : Matrix();
    const Vector& psi = model->extraction.uniquenesses;
    auto f = std::make_unique<lode_item_flags>();
    f->flags = flag_items(model->rotation.pattern, phi, psi, fo);  // checks the thresholds, naming them
    f->options = fo;
    f->communalities = Vector::Ones(psi.size()) - psi;
    f->items = model->rotation.pattern.rows();
    return f;
  });
}

LODE_API void lode_item_flags_free(lode_item_flags* flags) { delete flags; }

LODE_KEY_GETTERS(lode_item_flags, lode_item_flags, flags_handle, flags_matrices, flags_values, flags_texts)

LODE_API int lode_item_flags_item_notes(const lode_item_flags* flags, int64_t item, char* out, size_t capacity,
                                        size_t* length) {
  return guarded([&] {
    require_pointer(flags, "flags");
    if (item < 0 || item >= static_cast<int64_t>(flags->items))
      fail(LODE_E_INVALID_ARGUMENT,
           fmt::format("item {} does not exist; items are numbered 0 to {}", item, flags->items - 1));
    write_text(notes_of(*flags, static_cast<Index>(item)), out, capacity, length);
  });
}

}  // extern "C"
