// command_channel.h — runs a configured program for each alarm transition
// (e.g. to light a stack lamp). No shell: argv comes from the config as is.
//
// The program gets the transition JSON on stdin and the main fields in
// environment variables: HEFT_EVENT_ID, HEFT_ALARM, HEFT_LINE, HEFT_AREA,
// HEFT_KIND, HEFT_HEAD, HEFT_STATE, HEFT_PREV_STATE, HEFT_PRIORITY, HEFT_WHY,
// HEFT_WHO, HEFT_MESSAGE. Exit status 0 = delivered; a non-zero exit, a
// signal or running past timeout_ms (then it is killed) = retry later.
// Started with posix_spawn (safe in a threaded process). Used by one DeliveryWorker.
#pragma once

#include "io/notify/channel.h"

namespace heft {

class CommandChannel : public Channel {
 public:
  explicit CommandChannel(ChannelSettings settings) : settings_(std::move(settings)) {}
  Status Deliver(const OutboxItem& item) override;

 private:
  ChannelSettings settings_;
};

}  // namespace heft
