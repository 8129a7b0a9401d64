// Power cycling of the baseplate demo's power module: the transient part of
// the flagship. OUR OWN SCENARIO WITH INVENTED DATA: the heat capacities and
// the switching pattern below come from no data sheet and describe no real
// product. The junction-temperature swing per cycle computed here is the
// quantity that thermal-cycling assessments start from; a lifetime
// assessment needs the applicable standards, validated material data and
// qualified engineers — this demo is none of those.
//
// Model: ρc dT/dt = ∇·(k(T)∇T) + q(t) on the baseplate cross-section of
// examples/baseplate (same geometry, materials and cooling), i.e. with the
// steady residual R(T) of baseplate.hpp (which carries the full chip power)
//   C dT/dt = −R(T) + S(t),   C = diag(ρc_P dx dy),
//   S_P(t) = (on_c(t) − 1) · load_P for the silicon cells of chip c,
// so a chip that is off removes its own load. Chips A and C (switches) are on
// during the first half of each period, chip B (diode) during the second.
#ifndef NKIT_EXAMPLES_POWER_CYCLING_HPP
#define NKIT_EXAMPLES_POWER_CYCLING_HPP

#include <Eigen/Core>
#include <array>
#include <cmath>
#include <vector>

#include "problems/heat/baseplate.hpp"

namespace nkit_examples {

using nkit_problems::baseplate_conduction;
using nkit_problems::region_count;

/// Invented volumetric heat capacities ρc, J/(m³ K), per baseplate_region
/// (plausible orders of magnitude only).
inline const std::array<double, region_count>& heat_capacity_table() {
  static const std::array<double, region_count> table{{
      2.4e6,  // aluminium plate
      1.7e6,  // solder, substrate attach
      3.0e6,  // ceramic substrate
      3.4e6,  // copper spreader
      1.7e6,  // solder, die attach
      1.6e6,  // silicon chip
      1.5e6,  // silicone gel
  }};
  return table;
}

/// The invented switching pattern: period and the half each chip conducts.
struct power_cycle {
  double period = 2.0;  ///< s
  /// true: the chip conducts in the first half of each period; false: the second.
  std::vector<bool> first_half{true, false, true};
  bool on(std::size_t chip, double t) const {
    const double phase = t / period - std::floor(t / period);
    return (phase < 0.5) == first_half[chip];
  }
};

/// S(t) of the file comment as a source(t, s) callable for nkit::residual_form.
class power_cycling_source {
 public:
  power_cycling_source(const baseplate_conduction& problem, power_cycle cycle)
      : m_load(problem.heat_load()), m_chip(problem.chip_of_cell()), m_cycle(std::move(cycle)) {}
  void operator()(double t, Eigen::VectorXd& s) const {
    for (Eigen::Index p = 0; p < s.size(); ++p) {
      const int c = m_chip[static_cast<std::size_t>(p)];
      s(p) = c >= 0 && !m_cycle.on(static_cast<std::size_t>(c), t) ? -m_load(p) : 0.0;
    }
  }
  const power_cycle& cycle() const { return m_cycle; }

 private:
  Eigen::VectorXd m_load;
  std::vector<int> m_chip;
  power_cycle m_cycle;
};

/// C = diag(ρc_P dx dy), J/(m K) per metre of depth.
inline Eigen::VectorXd heat_capacity_per_cell(const baseplate_conduction& problem) {
  Eigen::VectorXd c(problem.unknowns());
  const double area = problem.cell_width() * problem.cell_height();
  for (Eigen::Index p = 0; p < c.size(); ++p) c(p) = heat_capacity_table()[problem.regions()(p)] * area;
  return c;
}

/// Junction temperature of each chip: the hottest of its silicon cells.
inline std::vector<double> junction_temperatures(const baseplate_conduction& problem, const Eigen::VectorXd& t) {
  std::vector<double> hottest(problem.design().chips.size(), -1e300);
  for (Eigen::Index p = 0; p < t.size(); ++p) {
    const int c = problem.chip_of_cell()[static_cast<std::size_t>(p)];
    if (c >= 0) hottest[static_cast<std::size_t>(c)] = std::max(hottest[static_cast<std::size_t>(c)], t(p));
  }
  return hottest;
}

}  // namespace nkit_examples

#endif  // NKIT_EXAMPLES_POWER_CYCLING_HPP
