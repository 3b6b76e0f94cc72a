// Calls bench/python_baselines.py (HiGHS and the numpy Sinkhorns) through
// /usr/bin/python3 and reads the JSON object it prints.
#pragma once

#include <string>
#include <vector>

namespace allocsim::bench {

class PythonAnswer {
 public:
  explicit PythonAnswer(std::string text) : text_(std::move(text)) {}
  bool ok() const { return !text_.empty() && text_.front() == '{'; }
  // The number under `key`; NaN when absent or null.
  double number(const std::string& key) const;
  bool flag(const std::string& key) const;
  std::string word(const std::string& key) const;
  const std::string& text() const { return text_; }

 private:
  std::string text_;
};

// Runs the script with `arguments`. OPENBLAS_CORETYPE and OPENBLAS_L2_SIZE
// are unset together for this child only (they slow a current numpy), and
// numpy's BLAS is held to one thread, like the solver it is compared with.
// `script` defaults to bench/python_baselines.py; `python_path` (when not
// empty) is put in PYTHONPATH, e.g. the folder of the built Python module.
PythonAnswer run_python(const std::vector<std::string>& arguments,
                        const std::string& script = ALLOCSIM_BENCH_SCRIPT,
                        const std::string& python_path = "");

}  // namespace allocsim::bench
