// Command-line options for the examples, one style for all: `--name=value`,
// `--flag` for booleans, `--help` prints every option with its default. Names
// are words joined by underscores; an option that sets a library setting has
// that setting's field name (--relative_tolerance, --restart_length, ...).
// Shared example plumbing (not part of the nkit library).
#ifndef NKIT_EXAMPLES_COMMON_COMMAND_LINE_HPP
#define NKIT_EXAMPLES_COMMON_COMMAND_LINE_HPP

#include <algorithm>
#include <cstdlib>
#include <exception>
#include <iomanip>
#include <iostream>
#include <map>
#include <sstream>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

namespace nkit_examples {

/// Collects option declarations, parses argv and hands back typed values.
/// Unknown options and malformed numbers are errors (std::invalid_argument).
class command_line {
 public:
  command_line(std::string program, std::string summary)
      : m_program(std::move(program)), m_summary(std::move(summary)) {}

  /// Declares an option with its default (as text) and a one-line description.
  void option(const std::string& name, const std::string& default_value, const std::string& description) {
    m_order.push_back(name);
    m_entries[name] = entry{default_value, description, false};
  }
  /// Declares a boolean flag (off unless given).
  void flag(const std::string& name, const std::string& description) {
    m_order.push_back(name);
    m_entries[name] = entry{"0", description, true};
  }

  /// Parses argv. Returns false when --help was given (usage already printed
  /// on `help_output`: an MPI program passes std::cout on rank 0 only).
  bool parse(int argc, char** argv, std::ostream* help_output = &std::cout) {
    for (int i = 1; i < argc; ++i) {
      std::string word = argv[i];
      if (word == "--help" || word == "-h") {
        if (help_output != nullptr) print_usage(*help_output);
        return false;
      }
      if (word.rfind("--", 0) != 0) throw std::invalid_argument(m_program + ": unexpected argument '" + word + "'");
      word = word.substr(2);
      std::string value;
      const auto equals = word.find('=');
      const bool has_value = equals != std::string::npos;
      if (has_value) {
        value = word.substr(equals + 1);
        word = word.substr(0, equals);
      }
      auto found = m_entries.find(word);
      if (found == m_entries.end()) {
        throw std::invalid_argument(m_program + ": unknown option --" + word + " (see --help)");
      }
      if (found->second.is_flag) {
        found->second.value = has_value ? value : "1";
      } else {
        if (!has_value) {
          throw std::invalid_argument(m_program + ": option --" + word + " needs a value: write --" + word +
                                      "=VALUE (see --help)");
        }
        found->second.value = value;
      }
    }
    return true;
  }

  std::string text(const std::string& name) const { return lookup(name).value; }
  double number(const std::string& name) const {
    const std::string& value = lookup(name).value;
    char* end = nullptr;
    const double result = std::strtod(value.c_str(), &end);
    if (end == value.c_str() || *end != '\0') {
      throw std::invalid_argument(m_program + ": --" + name + " must be a number (got '" + value + "')");
    }
    return result;
  }
  int integer(const std::string& name) const {
    const std::string& value = lookup(name).value;
    char* end = nullptr;
    const long result = std::strtol(value.c_str(), &end, 10);
    if (end == value.c_str() || *end != '\0') {
      throw std::invalid_argument(m_program + ": --" + name + " must be an integer (got '" + value + "')");
    }
    return static_cast<int>(result);
  }
  bool is_set(const std::string& name) const { return lookup(name).value != "0"; }

  void print_usage(std::ostream& os) const {
    os << m_program << ": " << m_summary << "\n\nusage: " << m_program
       << " [--name=value ...]\n\noptions (with defaults):\n";
    std::vector<std::pair<std::string, std::string>> lines;
    std::size_t width = 0;
    for (const std::string& name : m_order) {
      const entry& e = m_entries.at(name);
      lines.emplace_back("  --" + name + (e.is_flag ? "" : "=" + e.value), e.description);
      width = std::max(width, lines.back().first.size());
    }
    lines.emplace_back("  --help", "print this list and exit");
    for (const auto& [left, description] : lines) {
      os << std::left << std::setw(static_cast<int>(width) + 2) << left << description << '\n';
    }
  }

  /// "name=value ..." of every option, for the run log.
  std::string summary() const {
    std::string out;
    for (const std::string& name : m_order) out += name + "=" + m_entries.at(name).value + " ";
    return out;
  }

 private:
  struct entry {
    std::string value;
    std::string description;
    bool is_flag = false;
  };
  const entry& lookup(const std::string& name) const {
    auto found = m_entries.find(name);
    if (found == m_entries.end()) throw std::logic_error(m_program + ": option --" + name + " was never declared");
    return found->second;
  }

  std::string m_program;
  std::string m_summary;
  std::vector<std::string> m_order;
  std::map<std::string, entry> m_entries;
};

/// The body of an example's main(): runs `run(argc, argv)` and turns an
/// exception (a bad option, an unwritable output folder, ...) into its message
/// on stderr and exit status 2.
inline int run_reporting_errors(int (*run)(int, char**), int argc, char** argv) {
  try {
    return run(argc, argv);
  } catch (const std::exception& error) {
    std::cerr << error.what() << '\n';
    return 2;
  }
}

}  // namespace nkit_examples

#endif  // NKIT_EXAMPLES_COMMON_COMMAND_LINE_HPP
