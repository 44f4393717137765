#include <countersign/plan/plan.hpp>

#include <algorithm>

namespace countersign::plan {

namespace {
template <class Item>
const Item* find_by_number(const std::vector<Item>& items, int number) {
  const auto it = std::find_if(items.begin(), items.end(), [number](const Item& i) { return i.number == number; });
  return it == items.end() ? nullptr : &*it;
}
}  // namespace

const DevicePositions* ControlPoint::device(DeviceType type) const {
  const auto it = std::find_if(devices.begin(), devices.end(),
                               [type](const DevicePositions& d) { return d.type == type; });
  return it == devices.end() ? nullptr : &*it;
}

const DevicePositions* ControlPoint::device(const Coded<DeviceType>& type) const {
  const auto it = std::find_if(devices.begin(), devices.end(), [&type](const DevicePositions& d) { return d.type == type; });
  return it == devices.end() ? nullptr : &*it;
}

const Beam* Plan::beam(int number) const { return find_by_number(beams, number); }
const PatientSetup* Plan::patient_setup(int number) const { return find_by_number(patient_setups, number); }
const DoseReference* Plan::dose_reference(int number) const { return find_by_number(dose_references, number); }

}  // namespace countersign::plan
