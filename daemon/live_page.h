// live_page.h — the floor-screen page heftd serves at /: one tile per line
// (state, level against target, sigma, giveaway rate, open alarms) and a live
// run chart of a chosen line, in large type readable from a few metres.
//
// The tiles are rendered into the page on the server (so the page shows the
// plant even before its script runs); a small inline script then polls
// /api/lines and /api/samples every 2 s and redraws. No external assets. State
// is shown by a word and a shape as well as colour. No acknowledge buttons: the
// daemon has no operator-action API yet.
//
// Used by HttpApi on the io thread. Pure function of the snapshot; thread-safe.
#pragma once

#include <string>

#include "core/monitor/plant.h"

namespace heft {

std::string RenderLivePage(const Plant& plant);

}  // namespace heft
