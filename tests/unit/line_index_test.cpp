// line_index_test.cpp — the per-record line lookup: every id inserted is found with
// its slot through growth, ids that differ only in length or late bytes stay apart,
// and ids never inserted are not found.
#include "core/monitor/line_index.h"

#include <catch2/catch.hpp>

#include <string>

TEST_CASE("line index: finds what was inserted, nothing else", "[monitor]") {
  heft::LineIndex index;
  CHECK(index.Find("oats-1") == nullptr);
  // Ids sharing their first 8 bytes, ids that are prefixes of others, the empty id.
  for (std::size_t i = 0; i < 1000; ++i) {
    index.Insert("honey-line-" + std::to_string(i), i);
  }
  index.Insert("honey-li", 1000);
  index.Insert("", 1001);
  CHECK(index.size() == 1002);
  for (std::size_t i = 0; i < 1000; ++i) {
    const std::size_t* slot = index.Find("honey-line-" + std::to_string(i));
    REQUIRE(slot != nullptr);
    CHECK(*slot == i);
  }
  REQUIRE(index.Find("honey-li") != nullptr);
  CHECK(*index.Find("honey-li") == 1000);
  REQUIRE(index.Find("") != nullptr);
  CHECK(*index.Find("") == 1001);
  CHECK(index.Find("honey-line-1000") == nullptr);
  CHECK(index.Find("honey-line-") == nullptr);
  CHECK(index.Find("honey-l") == nullptr);
}
