// channel_factory.cpp — MakeChannel: settings → the channel object.
#include "io/notify/channel.h"
#include "io/notify/command_channel.h"
#include "io/notify/mqtt_channel.h"
#include "io/notify/syslog_channel.h"
#include "io/notify/webhook_channel.h"

namespace heft {

std::unique_ptr<Channel> MakeChannel(const ChannelSettings& settings) {
  switch (settings.type) {
    case ChannelType::kSyslog:
      return std::make_unique<SyslogChannel>(settings);
    case ChannelType::kCommand:
      return std::make_unique<CommandChannel>(settings);
    case ChannelType::kWebhook:
      return std::make_unique<WebhookChannel>(settings);
    case ChannelType::kMqtt:
      return std::make_unique<MqttChannel>(settings);
    case ChannelType::kLog:
      break;
  }
  return nullptr;
}

}  // namespace heft
