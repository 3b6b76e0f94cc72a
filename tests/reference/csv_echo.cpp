// csv_echo IN.csv OUT.csv [--missing-zero]: reads a matrix with the CSV
// reader and writes it back with the CSV writer (labels kept), so that
// tests/reference/csv_vs_numpy.py can compare both with numpy and Python's
// csv module. An InputError prints one line on stderr and exits 2.
#include <cstring>
#include <iostream>

#include "allocsim/core/csv.hpp"
#include "allocsim/core/error.hpp"

int main(int argc, char** argv) {
  if (argc < 3 || argc > 4 || (argc == 4 && std::strcmp(argv[3], "--missing-zero") != 0)) {
    std::cerr << "usage: csv_echo IN.csv OUT.csv [--missing-zero]\n";
    return 2;
  }
  try {
    allocsim::CsvReadOptions options;
    options.missing_as_zero = argc == 4;
    const allocsim::LabeledMatrix m = allocsim::read_matrix_csv(argv[1], options);
    allocsim::write_matrix_csv(argv[2], m.values, m.row_labels, m.column_labels);
  } catch (const allocsim::InputError& e) {
    std::cerr << "csv_echo: " << e.what() << "\n";
    return 2;
  }
  return 0;
}
