// The terrain-profile primitive of the sightline rule (SightlineSamples::forEachSample): the
// crossings of O→C with the column and row lines through cell centres, in order along the
// segment, each interpolated between its two neighbouring centres (docs/design.md, the
// sightline rule). Checked on a plane, where linear interpolation is exact, so every height is
// known in closed form.
#include <gtest/gtest.h>

#include <cmath>
#include <limits>
#include <vector>

#include "lookfar/viewshed/SightlineSamples.hpp"

using namespace lookfar;

namespace {

struct Sample {
    double t, z;
};

std::vector<Sample> profile(const SightlineSamples& s) {
    std::vector<Sample> out;
    s.forEachSample([&](double t, double z) { out.push_back({t, z}); });
    return out;
}

/// z = 100 + 2·col − 3·row on a 12 × 12 grid.
std::vector<float> plane() {
    std::vector<float> z(144);
    for (int r = 0; r < 12; ++r)
        for (int c = 0; c < 12; ++c)
            z[r * 12 + c] = static_cast<float>(100 + 2 * c - 3 * r);
    return z;
}

/// The samples of O→C on the 12 × 12 grid `z`: O = (c0, r0), C = O + (dc, dr).
SightlineSamples on(const std::vector<float>& z, int c0, int r0, int dc, int dr) {
    SightlineSamples s;
    s.dem = z.data();
    s.width = 12;
    s.c0 = c0, s.r0 = r0;
    s.dc = dc, s.dr = dr;
    return s;
}

}  // namespace

TEST(SightlineSamples, ProfileCrossesEveryLineInOrderWithExactHeightsOnAPlane) {
    const std::vector<float> z = plane();
    // C = (5, 5): columns 3, 4 at t = 1/3, 2/3; row 6 at t = 1/2.
    const SightlineSamples s = on(z, 2, 7, 3, -2);
    const std::vector<Sample> p = profile(s);
    ASSERT_EQ(p.size(), 3u);
    const double ts[] = {1.0 / 3, 0.5, 2.0 / 3};
    for (int k = 0; k < 3; ++k) {
        EXPECT_DOUBLE_EQ(p[k].t, ts[k]);
        const double col = s.c0 + ts[k] * s.dc, row = s.r0 + ts[k] * s.dr;
        EXPECT_NEAR(p[k].z, 100 + 2 * col - 3 * row, 1e-12) << "sample " << k;
    }
}

TEST(SightlineSamples, DiagonalGivesColumnThenRowAtEachCorner) {
    // On a 45° line the column and row lines cross the segment at the same t: both samples,
    // column first, both on a cell centre.
    const std::vector<float> z = plane();
    SightlineSamples s = on(z, 1, 1, 3, 3);
    const std::vector<Sample> p = profile(s);
    ASSERT_EQ(p.size(), 4u);
    EXPECT_DOUBLE_EQ(p[0].t, 1.0 / 3);
    EXPECT_DOUBLE_EQ(p[1].t, 1.0 / 3);
    EXPECT_DOUBLE_EQ(p[2].t, 2.0 / 3);
    EXPECT_DOUBLE_EQ(p[0].z, z[2 * 12 + 2]);
    EXPECT_DOUBLE_EQ(p[1].z, z[2 * 12 + 2]);
    EXPECT_DOUBLE_EQ(p[3].z, z[3 * 12 + 3]);
}

TEST(SightlineSamples, NoDataNeighbourGivesANoDataSample) {
    std::vector<float> z = plane();
    z[7 * 12 + 4] = std::numeric_limits<float>::quiet_NaN();  // cell (4, 7)
    // Column 4 is crossed at t = 1/2, at row 7.5: between cells (4, 7) and (4, 8).
    const SightlineSamples s = on(z, 2, 7, 4, 1);
    const std::vector<Sample> p = profile(s);
    ASSERT_EQ(p.size(), 3u);
    EXPECT_TRUE(std::isnan(p[1].z));
    EXPECT_FALSE(std::isnan(p[0].z));
    EXPECT_FALSE(std::isnan(p[2].z));
    // The gain of the same sample is NaN too: no-data never blocks (SightlineRule).
    EXPECT_TRUE(std::isnan(s.columnGain(4)));
}

TEST(SightlineSamples, AlongARowOrAColumnOnlyOneKindOfLine) {
    const std::vector<float> z = plane();
    SightlineSamples s = on(z, 6, 6, -5, 0);
    std::vector<Sample> p = profile(s);
    ASSERT_EQ(p.size(), 4u);
    for (int k = 0; k < 4; ++k)
        EXPECT_DOUBLE_EQ(p[k].z, z[6 * 12 + 5 - k]);
    s.dc = 0, s.dr = 4;
    p = profile(s);
    ASSERT_EQ(p.size(), 3u);
    EXPECT_DOUBLE_EQ(p[2].z, z[9 * 12 + 6]);
}
