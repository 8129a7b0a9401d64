// Lid-driven cavity (streamfunction–vorticity, see cavity.hpp) solved by
// Newton–GMRES with continuation in Re, compared with Ghia, Ghia & Shin
// (1982) Tables I and II.
//
//   lid_driven_cavity [--intervals=128] [--reynolds=1000] [--preconditioner=sparse_direct]
//                     [--relative_tolerance=1e-10] [--output=cavity_output] [--help]
#include <cstdio>
#include <fstream>
#include <iostream>
#include <nkit/preconditioners/incomplete_lut.hpp>
#include <string>

#include "common/command_line.hpp"
#include "common/run_output.hpp"
#include "common/vtk_legacy.hpp"
#include "problems/baselines/process_resources.hpp"
#include "problems/flow/cavity_solve.hpp"

namespace {

using nkit_problems::lid_driven_cavity;

void write_centre_lines(const std::filesystem::path& folder, const lid_driven_cavity& cavity,
                        const Eigen::VectorXd& state, bool reynolds_1000) {
  const int n = cavity.intervals(), half = n / 2;
  std::ofstream computed(folder / "centre_lines.csv");
  computed << "position,u_vertical_centre_line,v_horizontal_centre_line\n";
  for (int k = 0; k <= n; ++k) {
    computed << k * cavity.spacing() << ',' << cavity.u(state, half, k) << ',' << cavity.v(state, k, half) << '\n';
  }
  std::ofstream reference(folder / "ghia_1982.csv");
  reference << "position,u_table_1,position,v_table_2\n";
  for (std::size_t m = 0; m < nkit_problems::ghia_1982::u_vertical_centre_line.size(); ++m) {
    const auto& u = nkit_problems::ghia_1982::u_vertical_centre_line[m];
    const auto& v = nkit_problems::ghia_1982::v_horizontal_centre_line[m];
    reference << u.position << ',' << (reynolds_1000 ? u.re_1000 : u.re_100) << ',' << v.position << ','
              << (reynolds_1000 ? v.re_1000 : v.re_100) << '\n';
  }
}

void write_fields(const std::filesystem::path& folder, const lid_driven_cavity& cavity, const Eigen::VectorXd& state) {
  // Node values as cell data of a grid of (n+1)² cells centred on the nodes.
  const int n = cavity.intervals();
  const double h = cavity.spacing();
  auto vtk =
      nkit_examples::vtk_rectilinear_file::uniform(n + 1, n + 1, -0.5 * h, 1.0 + 0.5 * h, -0.5 * h, 1.0 + 0.5 * h);
  Eigen::VectorXd psi(vtk.cells()), omega(vtk.cells()), u(vtk.cells()), v(vtk.cells()), speed(vtk.cells());
  std::ofstream plot(folder / "cavity_field.dat");
  for (int j = 0; j <= n; ++j) {
    for (int i = 0; i <= n; ++i) {
      const Eigen::Index c = i + static_cast<Eigen::Index>(n + 1) * j;
      psi(c) = cavity.streamfunction(state, i, j);
      omega(c) = cavity.vorticity(state, i, j);
      u(c) = cavity.u(state, i, j);
      v(c) = cavity.v(state, i, j);
      speed(c) = std::hypot(u(c), v(c));
      plot << i * h << ' ' << j * h << ' ' << speed(c) << ' ' << psi(c) << '\n';
    }
    plot << '\n';
  }
  vtk.add_scalar("streamfunction", psi);
  vtk.add_scalar("vorticity", omega);
  vtk.add_scalar("speed", speed);
  vtk.add_vector("velocity", u, v);
  vtk.write(folder / "cavity.vtk", "nkit lid-driven cavity, streamfunction-vorticity");
}

int run(int argc, char** argv) {
  nkit_examples::command_line options("lid_driven_cavity",
                                      "lid-driven cavity, Newton-GMRES with continuation in Re, vs Ghia et al. 1982");
  options.option("intervals", "128", "grid intervals per side (128 = Ghia's 129 x 129 nodes); even");
  options.option("reynolds", "1000", "target Reynolds number (Ghia data exist for 100 and 1000)");
  options.option("preconditioner", "sparse_direct",
                 "sparse_direct (nkit: exact sparse LU of the Jacobian) or ilut (nkit: incomplete LUT)");
  options.option("relative_tolerance", "1e-10", "per continuation step: ||R|| <= this * ||R(start)||");
  options.option("output", "cavity_output", "folder for CSV, VTK and PNG files");
  if (!options.parse(argc, argv)) return 0;
  const int n = options.integer("intervals");
  if (n < 4 || n % 2 != 0) throw std::invalid_argument("lid_driven_cavity: --intervals must be even and >= 4");
  const double re = options.number("reynolds");
  const auto folder = nkit_examples::make_output_folder(options.text("output"));
  std::printf("Lid-driven cavity, streamfunction-vorticity, %d x %d nodes, %lld unknowns, Re = %g\noptions: %s\n\n",
              n + 1, n + 1, static_cast<long long>(2 * static_cast<long long>(n - 1) * (n - 1)), re,
              options.summary().c_str());

  const auto settings = nkit_problems::cavity_newton_settings(options.number("relative_tolerance"));
  const std::string choice = options.text("preconditioner");
  nkit_problems::cavity_solution solution;
  if (choice == "sparse_direct") {
    solution = nkit_problems::solve_cavity<nkit::sparse_direct_preconditioner>(n, re, settings);
  } else if (choice == "ilut") {
    solution = nkit_problems::solve_cavity<nkit::incomplete_lut_preconditioner>(n, re, settings);
  } else {
    throw std::invalid_argument("lid_driven_cavity: unknown --preconditioner " + choice);
  }
  std::printf("continuation |       Re | Newton steps | GMRES iterations | residual evaluations | outcome\n");
  for (std::size_t k = 0; k < solution.reports.size(); ++k) {
    const auto& r = solution.reports[k];
    std::printf("%12zu | %8.1f | %12d | %16lld | %20lld | %s\n", k + 1, solution.reynolds[k], r.newton_steps,
                static_cast<long long>(r.linear_iterations), static_cast<long long>(r.residual_evaluations),
                std::string(nkit::name(r.reason)).c_str());
  }
  std::printf(
      "total: %lld Newton steps, %lld GMRES iterations, %lld residual evaluations, %.2f s, peak memory %.0f MiB\n",
      solution.newton_steps, solution.linear_iterations, solution.residual_evaluations, solution.seconds,
      nkit_problems::mebibytes(nkit_problems::peak_memory_bytes()));
  std::printf("\nlast Newton solve (Re = %g):\n", re);
  nkit::print_convergence_table(std::cout, solution.reports.back());
  nkit_examples::write_history(folder, "newton_history.csv", solution.reports.back());

  lid_driven_cavity cavity(n, re);
  const bool reynolds_1000 = re == 1000.0;
  if (re == 100.0 || reynolds_1000) {
    const auto comparison = nkit_problems::compare_with_ghia(cavity, solution.state, reynolds_1000);
    std::printf(
        "\nGhia, Ghia & Shin (1982), J. Comput. Phys. 48, Tables I-II at Re = %g: max |u - u_Ghia| = %.4f "
        "(at y = %.4f), "
        "max |v - v_Ghia| = %.4f (at x = %.4f)\n",
        re, comparison.max_u_deviation, comparison.worst_u_position, comparison.max_v_deviation,
        comparison.worst_v_position);
    const auto vortex = cavity.primary_vortex(solution.state);
    const auto& reference = reynolds_1000 ? nkit_problems::ghia_1982::primary_vortex_re_1000
                                          : nkit_problems::ghia_1982::primary_vortex_re_100;
    std::printf(
        "primary vortex: psi = %.6f at (%.4f, %.4f); Ghia, Ghia & Shin (1982), J. Comput. Phys. 48, Table V "
        "(not yet checked against the paper): %.6f at (%.4f, %.4f)\n",
        vortex.streamfunction, vortex.x, vortex.y, reference.streamfunction, reference.x, reference.y);
  }
  write_centre_lines(folder, cavity, solution.state, reynolds_1000);
  write_fields(folder, cavity, solution.state);

  char title[128];
  std::snprintf(title, sizeof title, "Lid-driven cavity, Re = %g, %d x %d nodes", re, n + 1, n + 1);
  const std::string field_script =
      std::string("set terminal pngcairo size 800,720 enhanced font 'Sans,11'\nset output 'cavity_streamlines.png'\n") +
      "set title '" + title + ": speed and streamlines'\n" +
      "set view map\nset size ratio -1\nset xrange [0:1]\nset yrange [0:1]\nunset key\n"
      "set contour base\nunset surface\nset cntrparam levels discrete -0.1,-0.09,-0.07,-0.05,-0.03,-0.01,-1e-3,"
      "-1e-4,-1e-5,1e-6,1e-5,5e-5,1e-4,2.5e-4,5e-4,1e-3,1.5e-3\n"
      "set table 'streamlines.dat'\nsplot 'cavity_field.dat' using 1:2:4\nunset table\n"
      "set palette rgb 33,13,10\nset cblabel 'speed'\nset xlabel 'x'\nset ylabel 'y'\n"
      "plot 'cavity_field.dat' using 1:2:3 with image, 'streamlines.dat' using 1:2 with lines lc rgb 'black' lw 1\n";
  const std::string line_script =
      std::string(
          "set terminal pngcairo size 900,600 enhanced font 'Sans,11'\nset output 'cavity_centre_lines.png'\n") +
      "set datafile separator ','\nset grid\nset key top left box opaque\nset title '" + title +
      ": centre-line velocities'\nset xlabel 'position along the centre line'\nset ylabel 'velocity / lid velocity'\n"
      "plot 'centre_lines.csv' using 1:2 skip 1 with lines lw 2 title 'u(0.5, y), nkit', "
      "'ghia_1982.csv' using 1:2 skip 1 with points pt 7 ps 1.2 title 'u, Ghia et al. 1982 Table I', "
      "'centre_lines.csv' using 1:3 skip 1 with lines lw 2 title 'v(x, 0.5), nkit', "
      "'ghia_1982.csv' using 3:4 skip 1 with points pt 5 ps 1.2 title 'v, Ghia et al. 1982 Table II'\n";
  nkit_examples::run_gnuplot(folder, "cavity_streamlines.gp", field_script, std::cout);
  nkit_examples::run_gnuplot(folder, "cavity_centre_lines.gp", line_script, std::cout);
  std::printf("\nwrote centre_lines.csv, ghia_1982.csv, newton_history.csv, cavity.vtk (and PNGs with gnuplot) in %s\n",
              std::filesystem::absolute(folder).string().c_str());
  return solution.converged ? 0 : 1;
}

}  // namespace

int main(int argc, char** argv) { return nkit_examples::run_reporting_errors(run, argc, argv); }
