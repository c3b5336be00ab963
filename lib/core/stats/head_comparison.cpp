#include "core/stats/head_comparison.h"

#include <algorithm>
#include <boost/math/distributions/fisher_f.hpp>
#include <boost/math/policies/policy.hpp>
#include <cmath>

namespace heft {
namespace {

// Report errors through errno, never by throwing: the core returns values.
using NoThrow = boost::math::policies::policy<
    boost::math::policies::domain_error<boost::math::policies::errno_on_error>,
    boost::math::policies::pole_error<boost::math::policies::errno_on_error>,
    boost::math::policies::overflow_error<boost::math::policies::errno_on_error>,
    boost::math::policies::evaluation_error<boost::math::policies::errno_on_error>>;

}  // namespace

HeadComparison CompareHeads(std::span<const HeadMoments> heads) {
  HeadComparison out;
  MomentAccumulator line;
  double ss_within = 0.0;
  std::size_t groups = 0;
  for (const HeadMoments& h : heads) {
    if (h.moments.count() == 0) continue;
    line.Merge(h.moments);
    ss_within += h.moments.SumSquaredDeviations();
    ++groups;
  }
  out.count = line.count();
  out.line_mean = line.Mean();
  // Offsets about the line accumulator's shift: small numbers, no 1e6-level rounding.
  const double line_about = line.MeanAbout(line.shift());
  for (const HeadMoments& h : heads) {
    if (h.moments.count() == 0) continue;
    out.heads.push_back(HeadFigures{h.head, h.moments.count(), h.moments.Mean(), h.moments.StdDev(),
                                    h.moments.MeanAbout(line.shift()) - line_about});
  }
  std::sort(out.heads.begin(), out.heads.end(),
            [](const HeadFigures& a, const HeadFigures& b) { return a.head < b.head; });
  std::vector<HeadFigures> by_offset = out.heads;
  std::stable_sort(by_offset.begin(), by_offset.end(),
                   [](const HeadFigures& a, const HeadFigures& b) {
                     return std::fabs(a.offset) > std::fabs(b.offset);
                   });
  for (std::size_t i = 0; i < by_offset.size() && i < 3; ++i)
    out.farthest.push_back(by_offset[i].head);

  if (groups < 2 || out.count <= groups) return out;
  double ss_between = 0.0;
  for (const HeadFigures& h : out.heads) {
    ss_between += static_cast<double>(h.count) * h.offset * h.offset;
  }
  out.df_between = groups - 1;
  out.df_within = out.count - groups;
  if (!(ss_within > 0.0)) return out;
  const double f = (ss_between / static_cast<double>(out.df_between)) /
                   (ss_within / static_cast<double>(out.df_within));
  out.f = f;
  const boost::math::fisher_f_distribution<double, NoThrow> dist(
      static_cast<double>(out.df_between), static_cast<double>(out.df_within));
  const double p = boost::math::cdf(boost::math::complement(dist, f));
  if (std::isfinite(p)) out.p_value = std::clamp(p, 0.0, 1.0);
  return out;
}

}  // namespace heft
