// Item flags. The thresholds are common practice (rules of thumb), so these tests check that each rule
// fires exactly as documented, on loadings built for the purpose, and that the notes name the item.
#include "lode/item_flags.hpp"

#include "support/errors.hpp"

#include <gtest/gtest.h>

using namespace lode;
using lode::testing::error_message;

namespace {

std::vector<ItemFlag> of_item(const std::vector<ItemFlag>& flags, Index item) {
  std::vector<ItemFlag> out;
  for (const auto& f : flags)
    if (f.item == item) out.push_back(f);
  return out;
}

}  // namespace

TEST(ItemFlags, EachRuleFiresAsDocumented) {
  Matrix l(7, 2);
  l << 0.75, 0.05,  // clean
      0.55, 0.45,   // two salient loadings: cross-loading
      0.50, 0.32,   // within 0.20 of each other: cross-loading
      0.30, 0.25,   // no salient loading (and low communality)
      0.10, -0.65,  // clean, negative
      0.60, 0.38,   // 0.22 apart: clean
      0.99, 0.10;   // uniqueness given at the bound: Heywood
  Vector u = Vector::Ones(7) - l.rowwise().squaredNorm();
  u(6) = 0.005;
  ItemFlagOptions o;
  o.item_names = {"pay", "hours", "team", "desk", "boss", "food", "code"};
  const auto flags = flag_items(l, Matrix(), u, o);
  EXPECT_TRUE(of_item(flags, 0).empty());
  ASSERT_EQ(of_item(flags, 1).size(), 1u);
  EXPECT_EQ(of_item(flags, 1)[0].kind, ItemFlagKind::cross_loading);
  EXPECT_EQ(of_item(flags, 1)[0].note,
            "item 'hours' cross-loads: 0.55 on factor 1 and 0.45 on factor 2 (both at least 0.40; common practice). It "
            "does not clearly belong to one factor.");
  ASSERT_EQ(of_item(flags, 2).size(), 1u);
  EXPECT_NE(of_item(flags, 2)[0].note.find("within 0.20 of each other"), std::string::npos);
  const auto desk = of_item(flags, 3);
  ASSERT_EQ(desk.size(), 2u);
  EXPECT_EQ(desk[0].kind, ItemFlagKind::no_salient_loading);
  EXPECT_EQ(desk[1].kind, ItemFlagKind::low_communality);
  EXPECT_EQ(desk[1].note, "item 'desk' has low communality 0.15, below 0.20 (common practice): the factors explain little of it.");
  EXPECT_TRUE(of_item(flags, 4).empty());
  EXPECT_TRUE(of_item(flags, 5).empty());
  const auto code = of_item(flags, 6);
  ASSERT_EQ(code.size(), 1u);
  EXPECT_EQ(code[0].kind, ItemFlagKind::heywood_case);
  EXPECT_NE(code[0].note.find("item 'code' has uniqueness 0.005"), std::string::npos);
  // Thresholds are parameters: a stricter salience makes item 'food' a cross-loading.
  o.salient = 0.35;
  EXPECT_EQ(of_item(flag_items(l, Matrix(), u, o), 5).at(0).kind, ItemFlagKind::cross_loading);
}

TEST(ItemFlags, CommunalityFromObliqueLoadingsAndUltraHeywood) {
  Matrix l(3, 2);
  l << 0.9, 0.5, 0.1, 0.2, 0.5, 0.1;
  Matrix phi(2, 2);
  phi << 1.0, 0.5, 0.5, 1.0;
  // No uniquenesses: communality = diag(L Phi L') = 0.81 + 0.25 + 2*0.45*0.5 = 1.51 for the first item.
  const auto flags = flag_items(l, phi, Vector());
  const auto first = of_item(flags, 0);
  bool ultra = false;
  for (const auto& f : first)
    if (f.kind == ItemFlagKind::heywood_case) {
      ultra = true;
      EXPECT_NEAR(f.value, 1.0 - 1.51, 1e-12);
      EXPECT_NE(f.note.find("column 1 has communality 1.510, above 1"), std::string::npos);
    }
  EXPECT_TRUE(ultra);
}

TEST(ItemFlags, ErrorsNameTheProblem) {
  const Matrix l = Matrix::Constant(3, 2, 0.5);
  EXPECT_EQ(error_message([&] { flag_items(l, Matrix(), Vector::Ones(2)); }),
            "there must be 3 finite uniquenesses, one per item; 2 were given");
  ItemFlagOptions o;
  o.salient = 1.5;
  EXPECT_EQ(error_message([&] { flag_items(l, Matrix(), Vector(), o); }),
            "item flag thresholds must lie in [0, 1] (salient 1.5, cross-loading gap 0.2, low communality 0.2, Heywood "
            "uniqueness 0.005)");
}
