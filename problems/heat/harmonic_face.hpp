// One conduction face of a cell-centred finite-volume scheme with the
// harmonic mean of the two cell conductivities, and its derivatives.
// Shared by the baseplate demo and the conduction verification example so
// that both use literally the same face formula.
//
//   F = g k_f (T_p − T_q),  k_f = 2 k_p k_q / (k_p + k_q)
//
// g is (face length)/(centre distance) for a 2D face (1/(centre distance)
// per unit area in 1D). The harmonic mean is the conductance of the two half
// cells in series, so the flux stays right across a jump in k (common
// practice; S.V. Patankar, "Numerical Heat Transfer and Fluid Flow",
// Hemisphere 1980, §4.2.3 — section number from memory). For a Dirichlet
// wall, pass the wall temperature as T_q, k(T_wall) as k_q, zero as its
// derivative, and g for the half-cell distance.
#ifndef NKIT_PROBLEMS_HEAT_HARMONIC_FACE_HPP
#define NKIT_PROBLEMS_HEAT_HARMONIC_FACE_HPP

namespace nkit_problems {

struct face_flux {
  double flux = 0.0;                ///< F, positive from p to q
  double derivative_p = 0.0;        ///< ∂F/∂T_p
  double derivative_q = 0.0;        ///< ∂F/∂T_q
  double frozen_conductance = 0.0;  ///< g k_f: ∂F/∂T_p with k frozen (Picard)
};

/// F and its derivatives; dk_p, dk_q are dk/dT at the two cells.
inline face_flux harmonic_face(double g, double t_p, double t_q, double k_p, double k_q, double dk_p, double dk_q) {
  const double sum = k_p + k_q;
  const double k_f = 2.0 * k_p * k_q / sum;
  const double difference = t_p - t_q;
  face_flux f;
  f.frozen_conductance = g * k_f;
  f.flux = f.frozen_conductance * difference;
  f.derivative_p = f.frozen_conductance + g * 2.0 * k_q * k_q / (sum * sum) * dk_p * difference;
  f.derivative_q = -f.frozen_conductance + g * 2.0 * k_p * k_p / (sum * sum) * dk_q * difference;
  return f;
}

}  // namespace nkit_problems

#endif  // NKIT_PROBLEMS_HEAT_HARMONIC_FACE_HPP
