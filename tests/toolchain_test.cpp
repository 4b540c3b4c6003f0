// Guards against a compiler fault seen here: GCC 12.2 at -O3 with the dynamic vectoriser cost model
// miscompiles this "last match wins" loop over a vector of structs (returns 0 instead of 1). The project
// builds with -fvect-cost-model=very-cheap on GCC < 13 (CMakeLists.txt); this test fails if that goes.
#include <gtest/gtest.h>

#include <string>
#include <vector>

namespace {

enum class Kind { wanted, image, spur };
struct Row {
    int m = 0, n = 0, order = 0;
    std::string label, expr;
    Kind kind = Kind::spur;
    double rf = 0, low = 0, high = 0, if_signed = 0;
    bool in_band = false;
    double level = 0;
};

int side_of(double x) { return x < 0 ? -1 : 1; }

__attribute__((noinline)) int last_wanted_side(const std::vector<Row>& rows) {
    int side = 0;
    for (const Row& r : rows)
        if (r.kind == Kind::wanted) side = side_of(r.if_signed);
    return side;
}

TEST(Toolchain, ConditionalReductionIsCompiledCorrectly) {
    std::vector<Row> rows(9);
    for (auto& r : rows) r.if_signed = -5;
    rows[4].kind = Kind::wanted;
    rows[4].if_signed = 2;
    EXPECT_EQ(last_wanted_side(rows), 1);
}

}  // namespace
