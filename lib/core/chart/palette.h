// palette.h — heft's own chart colours, chosen to stay distinguishable for the
// common forms of colour-vision deficiency, and the shapes that carry the same
// meaning without colour.
//
// Principles followed (published colour-blind-safe design practice, our own
// values): the data series and the warnings sit on a blue / orange axis, which
// stays apart under protanopia and deuteranopia; every pair used together
// differs clearly in lightness as well as hue, so a greyscale print keeps them
// apart; red and green are never the only difference. State is always also
// shown by shape (circle = ok pack, triangle = rejected, cross = weighing error;
// filled marker = raised event, hollow = cleared) or by pattern (hatching =
// settling) or by dash style (reference lines).
//
// Used by the chart writers (run chart, histogram, box plot) and the HTML
// report's CSS. Constants only; thread-safe.
#pragma once

namespace heft::chart {

// Text, axes and frame.
inline constexpr const char* kInk = "#1d232b";      // near-black, AAA contrast on white
inline constexpr const char* kInkSoft = "#55606e";  // tick labels, notes
inline constexpr const char* kGrid = "#dfe3e8";     // grid lines
inline constexpr const char* kBackground = "#ffffff";
// Data.
inline constexpr const char* kData = "#2b5fa8";       // pack weights, boxes (mid blue)
inline constexpr const char* kDataLight = "#a9c1e4";  // min/max band of down-sampled runs
inline constexpr const char* kDataFill = "#d8e4f4";   // box and bar fill
// Zones about the centre line (lightest nearest the centre).
inline constexpr const char* kZone1 = "#f3f6fb";  // within ±1 sigma
inline constexpr const char* kZone2 = "#e6edf7";  // 1..2 sigma
inline constexpr const char* kZone3 = "#d6e1f1";  // 2..3 sigma
// Reference and limit lines.
inline constexpr const char* kCentre = "#1d232b";   // centre line (solid, dark)
inline constexpr const char* kLimit = "#c4610a";    // control limits, T1 (orange, dashed)
inline constexpr const char* kSevere = "#8e2a12";   // T2, alarms (dark brick, dash-dot)
inline constexpr const char* kNominal = "#11776a";  // nominal quantity (dark teal, solid)
// Events and states.
inline constexpr const char* kWarning = "#c4610a";   // warning events (orange diamond)
inline constexpr const char* kAlarm = "#8e2a12";     // alarm events (brick triangle)
inline constexpr const char* kInfo = "#5b4a8b";      // info events (violet circle)
inline constexpr const char* kSettling = "#7c8593";  // settling hatch (grey)
inline constexpr const char* kOutlier = "#8e2a12";   // box-plot outliers

}  // namespace heft::chart
