// The experiment keys: every key of an experiment file, declared once.
//
// The table drives parsing (INI files and --section.key options), value and
// range checks, error messages (file, line, key and the nearest valid key)
// and the --help text. A key is "section.key", e.g. dynamics.temperature,
// written in a file as
//   [dynamics]
//   temperature = 0.05
// and on the command line as --dynamics.temperature 0.05.
#pragma once

#include <map>
#include <string>
#include <vector>

#include "allocsim/experiments/sweep.hpp"

namespace allocsim {

enum class KeyKind {
  integer,  // whole number (1e4 is accepted when it is whole)
  real,     // floating-point number
  boolean,  // true | false (also yes | no, 1 | 0)
  word,     // one of the listed words
  path,     // a file name; "" = none
};

struct ExperimentKey {
  std::string name;  // section.key
  KeyKind kind = KeyKind::real;
  std::string default_value;       // as it would be written in a file
  std::string description;         // one line for --help: meaning, unit
  double lowest = 0, highest = 0;  // bounds of numbers (when has_bounds)
  bool has_lowest = false, has_highest = false;
  bool lowest_open = false;        // true: value must be > lowest (not >=)
  std::vector<std::string> words;  // the allowed words of a word key

  // "integer >= 1", "one of price|gumbel|queue|learn", ...
  std::string valid_values() const;
};

// Every key, in the order --help shows them.
const std::vector<ExperimentKey>& experiment_keys();
// nullptr when there is no such key.
const ExperimentKey* find_experiment_key(const std::string& name);
// The valid key closest to `name` (edit distance on the full name or on the
// part after the dot).
std::string nearest_experiment_key(const std::string& name);
// "section.a, section.b": the keys of a lower layer's option fields (e.g. a
// Settling's settings_to_change under "dynamics").
std::string key_list(const std::string& section, const std::vector<std::string>& fields);

// The value of every key, with where each came from. Starts from the
// defaults; set() checks the key and its value.
class ExperimentValues {
 public:
  ExperimentValues();

  // Throws InputError "<where>: <key>: ..." for an unknown key (naming the
  // nearest valid one) or a value that is not valid for the key.
  void set(const std::string& key, const std::string& text, const std::string& where);

  const std::string& text(const std::string& key) const;
  double real(const std::string& key) const;
  long long integer(const std::string& key) const;
  bool boolean(const std::string& key) const;
  // True when the value was given (file or command line), not a default.
  bool given(const std::string& key) const;
  // "exp.ini:12", "--dynamics.rule", or "default".
  const std::string& where(const std::string& key) const;

  // The full experiment as INI text (every key, sections in table order;
  // keys left at their default appear commented out): running it again
  // gives the same run.
  std::string to_ini() const;

 private:
  struct Entry {
    std::string text;
    std::string where;
    bool given = false;
  };
  const Entry& entry(const std::string& key) const;
  std::map<std::string, Entry> entries_;
};

// The [sweep] section of an experiment file (see sweep.hpp for its syntax).
struct SweepSection {
  std::vector<SweepAxis> axes;  // in file order
  SweepCombine combine = SweepCombine::grid;
  long replicates = 1;

  bool empty() const { return axes.empty() && replicates == 1; }
};

// Reads an INI experiment file into `values` (Boost.Program_options parses
// it; lines are located for messages). Throws InputError naming the file and
// line for an unreadable file, a malformed line, an unknown key (with the
// nearest valid one), a key given twice, or a bad value. The [sweep] section
// goes into `sweep`; without it (nullptr) a [sweep] section is an error
// that points to `allocsim run`. Every value of every axis is checked here.
void read_experiment_file(const std::string& path, ExperimentValues& values,
                          SweepSection* sweep = nullptr);

// Adds one [sweep] line (key without the "sweep." prefix); checks it.
void add_sweep_line(SweepSection& sweep, const std::string& key, const std::string& text,
                    const std::string& where);

// Help text listing every key with its default, valid values and meaning.
std::string experiment_keys_help();

}  // namespace allocsim
