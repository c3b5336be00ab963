// live_page.h — the floor-screen page heftd serves at /: one tile per line
// (state, level against target, sigma, giveaway rate, open alarms) and a live
// run chart of a chosen line, in large type readable from a few metres.
//
// The tiles are rendered into the page on the server (so the page shows the
// plant even before its script runs); a small inline script then polls
// /api/lines and /api/samples every 2 s and redraws. No external assets. State
// is shown by a word and a shape as well as colour. With `operator_actions`
// (an http.token is configured) each line tile also lists its active alarms
// from /api/alarms, the unacknowledged ones with a large "Acknowledge" button;
// the page asks for the token once, keeps it in sessionStorage (never in the
// URL) and POSTs /api/alarms/ID/ack with it. Without, no buttons at all.
//
// Used by HttpApi on the io thread. Pure function of the snapshot; thread-safe.
#pragma once

#include <string>

#include "core/monitor/plant.h"

namespace heft {

std::string RenderLivePage(const Plant& plant, bool operator_actions = false);

}  // namespace heft
