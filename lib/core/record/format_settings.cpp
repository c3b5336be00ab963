// format_settings.cpp — names of fields and units (see format_settings.h).
#include "core/record/format_settings.h"

#include "core/record/record_fields.h"

namespace heft {
namespace {
constexpr std::array<std::string_view, kRecordFieldCount> kFieldNames = {"line", "head", "weight",
                                                                         "time", "unit", "status"};

// Exact definitions: 1 lb = 0.45359237 kg (international avoirdupois pound,
// 1959 agreement); 1 oz = 1/16 lb = 28.349523125 g. Same as native_record.cpp.
constexpr double kGramsPerKilogram = 1000.0;
constexpr double kGramsPerOunce = 28.349523125;
constexpr double kGramsPerPound = 453.59237;
}  // namespace

std::string_view RecordFieldName(RecordField field) {
  return kFieldNames[static_cast<std::size_t>(field)];
}

std::optional<RecordField> RecordFieldFromName(std::string_view name) {
  for (std::size_t i = 0; i < kRecordFieldCount; ++i) {
    if (kFieldNames[i] == name) return static_cast<RecordField>(i);
  }
  return std::nullopt;
}

std::optional<WeightUnit> WeightUnitFromName(std::string_view name) {
  if (EqualsIgnoreCase(name, "g")) return WeightUnit::kGram;
  if (EqualsIgnoreCase(name, "kg")) return WeightUnit::kKilogram;
  if (EqualsIgnoreCase(name, "oz")) return WeightUnit::kOunce;
  if (EqualsIgnoreCase(name, "lb")) return WeightUnit::kPound;
  return std::nullopt;
}

double GramsPer(WeightUnit unit) {
  switch (unit) {
    case WeightUnit::kGram:
      return 1.0;
    case WeightUnit::kKilogram:
      return kGramsPerKilogram;
    case WeightUnit::kOunce:
      return kGramsPerOunce;
    case WeightUnit::kPound:
      return kGramsPerPound;
  }
  return 1.0;
}

void ApplyDefaultKeys(FormatSettings* settings) {
  if (settings->kind != FormatKind::kKeyValue && settings->kind != FormatKind::kJsonLines) return;
  for (std::size_t i = 0; i < kRecordFieldCount; ++i) {
    const auto field = static_cast<RecordField>(i);
    if (field == RecordField::kLine && !settings->line_id.empty()) continue;
    FieldRef& ref = settings->fields[i];
    if (!ref.used()) ref.name = std::string(kFieldNames[i]);
  }
}

}  // namespace heft
