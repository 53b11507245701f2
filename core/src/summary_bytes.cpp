// The portable byte form of a summary (layout in summary.hpp beside summary_to_bytes): writing, and
// reading with every check that keeps a truncated or corrupted form from becoming a wrong number.
#include "lode/summary.hpp"

#include "summary_detail.hpp"

#include <fmt/format.h>

#include <cmath>
#include <cstring>
#include <limits>

namespace lode {

namespace {

constexpr char kMagic[8] = {'L', 'O', 'D', 'E', 'S', 'U', 'M', 'M'};
constexpr std::uint32_t kOverLimit = 0xFFFFFFFFu;
constexpr std::uint32_t kMaxItems = 100000;

// FNV-1a, 64 bits (Fowler, Noll & Vo; offset basis and prime as published for the 64-bit variant).
std::uint64_t fnv1a(const std::uint8_t* p, std::size_t n) {
  std::uint64_t h = 14695981039346656037ull;
  for (std::size_t i = 0; i < n; ++i) {
    h ^= p[i];
    h *= 1099511628211ull;
  }
  return h;
}

class Writer {
 public:
  void u32(std::uint32_t v) { put(v, 4); }
  void u64(std::uint64_t v) { put(v, 8); }
  void f64(double v) {
    std::uint64_t bits;
    std::memcpy(&bits, &v, 8);
    put(bits, 8);
  }
  void raw(const void* p, std::size_t n) {
    const auto* b = static_cast<const std::uint8_t*>(p);
    out.insert(out.end(), b, b + n);
  }
  std::vector<std::uint8_t> out;

 private:
  void put(std::uint64_t v, int bytes) {
    for (int i = 0; i < bytes; ++i) out.push_back(static_cast<std::uint8_t>(v >> (8 * i)));
  }
};

[[noreturn]] void corrupt(const std::string& what) {
  throw Error(ErrorCode::invalid_argument, "this is not a readable Lode summary: " + what);
}

class Reader {
 public:
  Reader(const std::uint8_t* p, std::size_t n) : p_(p), n_(n) {}
  // A little-endian unsigned integer of 1 to 8 bytes.
  std::uint64_t get(int bytes, const char* what) {
    if (bytes < 1 || bytes > 8) throw Error(ErrorCode::internal, "summary reader: a field of 1 to 8 bytes only");
    need(static_cast<std::size_t>(bytes), what);
    std::uint64_t v = 0;
    for (int i = 0; i < bytes; ++i) v |= static_cast<std::uint64_t>(p_[at_ + static_cast<std::size_t>(i)]) << (8 * i);
    at_ += static_cast<std::size_t>(bytes);
    return v;
  }
  void skip(std::size_t bytes, const char* what) {
    need(bytes, what);
    at_ += bytes;
  }
  std::uint32_t u32(const char* what) { return static_cast<std::uint32_t>(get(4, what)); }
  std::int64_t count(const char* what) {
    const std::uint64_t v = get(8, what);
    if (v > (std::uint64_t{1} << 48))
      corrupt(fmt::format("{} is {}, more than any real count", what, v));
    return static_cast<std::int64_t>(v);
  }
  double f64(const char* what) {
    const std::uint64_t bits = get(8, what);
    double v;
    std::memcpy(&v, &bits, 8);
    if (!std::isfinite(v)) corrupt(fmt::format("{} is not a finite number", what));
    return v;
  }
  std::string text(std::size_t n, const char* what) {
    need(n, what);
    std::string s(reinterpret_cast<const char*>(p_ + at_), n);
    at_ += n;
    return s;
  }
  void need(std::size_t bytes, const char* what) const {
    if (bytes > n_ - at_)
      corrupt(fmt::format("it ends early ({} bytes) where {} should be: it was cut short", n_, what));
  }
  std::size_t left() const { return n_ - at_; }
  std::size_t at() const { return at_; }

 private:
  const std::uint8_t* p_;
  std::size_t n_;
  std::size_t at_ = 0;
};

void check_consistency(const Summary& s) {
  const Index p = s.items();
  const auto label = [&](Index j) { return item_label(s.item_names, j); };
  if (s.rows_complete > s.rows_any || s.rows_any > s.rows_total)
    corrupt(fmt::format("its row counts disagree ({} complete, {} with an answer, {} in all)", s.rows_complete,
                        s.rows_any, s.rows_total));
  if (static_cast<double>(s.missing_cells) > static_cast<double>(s.rows_total) * static_cast<double>(p)) corrupt("it counts more missing cells than cells");
  for (Index i = 0; i < p; ++i) {
    if (s.n(i, i) > s.rows_total) corrupt(fmt::format("{} has more answers than rows", label(i)));
    for (Index j = 0; j < p; ++j) {
      if (s.n(i, j) > std::min(s.n(i, i), s.n(j, j)))
        corrupt(fmt::format("{} and {} are answered together more often than alone", label(std::min(i, j)),
                            label(std::max(i, j))));
      if (s.m2(i, j) < 0.0) corrupt(fmt::format("a sum of squares of {} is negative", label(i)));
    }
    const auto& cat = s.categories[static_cast<std::size_t>(i)];
    if (cat.over_limit) continue;
    std::int64_t total = 0;
    for (std::size_t k = 0; k < cat.values.size(); ++k) {
      if (k > 0 && !(cat.values[k] > cat.values[k - 1]))
        corrupt(fmt::format("the categories of {} are not in ascending order", label(i)));
      if (cat.counts[k] <= 0) corrupt(fmt::format("a category of {} has no answers", label(i)));
      total += cat.counts[k];
    }
    if (total != s.n(i, i))
      corrupt(fmt::format("the category counts of {} add up to {}, not to its {} answers", label(i), total, s.n(i, i)));
  }
  for (Index a = 0; a < p; ++a)
    for (Index b = a + 1; b < p; ++b) {
      if (!detail::has_table(s, a, b)) continue;
      std::int64_t total = 0;
      for (std::int64_t v : s.tables[detail::pair_index(a, b, p)]) total += v;
      if (total != s.n(a, b))
        corrupt(fmt::format("the table of {} and {} holds {} answers, not {}", label(a), label(b), total, s.n(a, b)));
    }
}

}  // namespace

std::vector<std::uint8_t> summary_to_bytes(const Summary& s) {
  const Index p = s.items();
  Writer w;
  w.raw(kMagic, 8);
  w.u32(kSummaryFormatVersion);
  w.u32(s.options.listwise ? 1u : 0u);
  w.u32(static_cast<std::uint32_t>(p));
  w.u32(static_cast<std::uint32_t>(s.options.max_categories));
  for (std::int64_t v : {s.rows_total, s.rows_complete, s.rows_any, s.missing_cells}) w.u64(static_cast<std::uint64_t>(v));
  for (const auto& name : s.item_names) {
    w.u32(static_cast<std::uint32_t>(name.size()));
    w.raw(name.data(), name.size());
  }
  for (Index i = 0; i < p; ++i)
    for (Index j = i; j < p; ++j) w.u64(static_cast<std::uint64_t>(s.n(i, j)));
  for (const Matrix* m : {&s.mean, &s.m2})
    for (Index i = 0; i < p; ++i)
      for (Index j = 0; j < p; ++j) w.f64((*m)(i, j));
  for (Index i = 0; i < p; ++i)
    for (Index j = i + 1; j < p; ++j) w.f64(s.comoment(i, j));
  for (const auto& cat : s.categories) {
    if (cat.over_limit) {
      w.u32(kOverLimit);
      continue;
    }
    w.u32(static_cast<std::uint32_t>(cat.values.size()));
    for (double v : cat.values) w.f64(v);
    for (std::int64_t c : cat.counts) w.u64(static_cast<std::uint64_t>(c));
  }
  for (Index a = 0; a < p; ++a)
    for (Index b = a + 1; b < p; ++b)
      if (detail::has_table(s, a, b))
        for (std::int64_t c : s.tables[detail::pair_index(a, b, p)]) w.u64(static_cast<std::uint64_t>(c));
  w.u64(fnv1a(w.out.data(), w.out.size()));
  return std::move(w.out);
}

Summary summary_from_bytes(const std::uint8_t* bytes, std::size_t size) {
  if (bytes == nullptr && size > 0) throw Error(ErrorCode::invalid_argument, "the summary's bytes are missing (NULL)");
  if (size < 8 || std::memcmp(bytes, kMagic, 8) != 0)
    corrupt("it does not begin with the mark LODESUMM (is it a summary at all?)");
  Reader r(bytes, size);
  r.get(8, "the mark");
  const std::uint32_t version = r.u32("the format version");
  if (version != kSummaryFormatVersion)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("this summary was written in format version {}; this Lode reads version {} (use the "
                            "same Lode version to write and read summaries)",
                            version, kSummaryFormatVersion));
  // The hash first: a corrupted form is reported as such, not as whatever field the damage hit.
  {
    if (size < 64) corrupt(fmt::format("it ends early ({} bytes): it was cut short", size));
    const std::uint64_t stored = Reader(bytes + size - 8, 8).get(8, "the check sum");
    if (stored != fnv1a(bytes, size - 8))
      corrupt("its check sum does not match its contents (it was cut short or altered on the way)");
  }
  Reader body(bytes, size - 8);
  body.skip(12, "the header");  // the mark and the version, read above
  const std::uint32_t flags = body.u32("the flags");
  if (flags > 1u) corrupt(fmt::format("it sets unknown flags ({:#x})", flags));
  const std::uint32_t p = body.u32("the number of items");
  if (p == 0 || p > kMaxItems) corrupt(fmt::format("it claims {} items", p));
  const std::uint32_t max_categories = body.u32("the category limit");
  if (max_categories < 2 || max_categories > static_cast<std::uint32_t>(kSummaryMaxCategoriesLimit))
    corrupt(fmt::format("its category limit is {}", max_categories));
  // The fixed-size part must fit before anything is allocated.
  const std::uint64_t pp = static_cast<std::uint64_t>(p) * p;
  if (pp * 16 + static_cast<std::uint64_t>(p) * 8 > body.left())
    corrupt(fmt::format("it is too short for {} items: it was cut short", p));
  SummaryOptions options;
  options.max_categories = static_cast<int>(max_categories);
  options.listwise = flags == 1u;
  std::int64_t counts[4];
  for (auto& c : counts) c = body.count("a row count");
  std::vector<std::string> names(p);
  for (auto& name : names) name = body.text(body.u32("an item name's length"), "an item name");
  Summary s = make_summary(std::move(names), options);
  s.rows_total = counts[0];
  s.rows_complete = counts[1];
  s.rows_any = counts[2];
  s.missing_cells = counts[3];
  const Index ip = static_cast<Index>(p);
  for (Index i = 0; i < ip; ++i)
    for (Index j = i; j < ip; ++j) s.n(i, j) = s.n(j, i) = body.count("a pair count");
  for (Matrix* m : {&s.mean, &s.m2})
    for (Index i = 0; i < ip; ++i)
      for (Index j = 0; j < ip; ++j) (*m)(i, j) = body.f64(m == &s.mean ? "a mean" : "a sum of squares");
  for (Index i = 0; i < ip; ++i) {
    s.comoment(i, i) = s.m2(i, i);
    for (Index j = i + 1; j < ip; ++j) s.comoment(i, j) = s.comoment(j, i) = body.f64("a co-moment");
  }
  for (auto& cat : s.categories) {
    const std::uint32_t k = body.u32("a category count");
    if (k == kOverLimit) {
      cat.over_limit = true;
      continue;
    }
    if (k > max_categories) corrupt(fmt::format("an item has {} categories, above its limit of {}", k, max_categories));
    body.need(static_cast<std::size_t>(k) * 16, "the categories");
    for (std::uint32_t c = 0; c < k; ++c) cat.values.push_back(body.f64("a category value"));
    for (std::uint32_t c = 0; c < k; ++c) cat.counts.push_back(body.count("a category's count"));
  }
  for (Index a = 0; a < ip; ++a)
    for (Index b = a + 1; b < ip; ++b) {
      if (!detail::has_table(s, a, b)) continue;
      const std::size_t cells =
          s.categories[static_cast<std::size_t>(a)].values.size() * s.categories[static_cast<std::size_t>(b)].values.size();
      body.need(cells * 8, "a pair's table");
      auto& table = s.tables[detail::pair_index(a, b, ip)];
      table.resize(cells);
      for (auto& c : table) c = body.count("a table cell");
    }
  if (body.left() != 0) corrupt(fmt::format("{} bytes follow its end", body.left()));
  check_consistency(s);
  return s;
}

}  // namespace lode
