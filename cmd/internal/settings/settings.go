// Package settings reads fixpoint's run-time settings: a typed struct per
// command, read once with the precedence flags > FIXPOINT_* environment
// variables > settings file > defaults. Every key means one thing in every
// command that has it; a settings file may hold the keys of any command.
//
// Model files (class, system, fleet) are not settings: package modelfile
// reads them.
package settings

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"github.com/spf13/pflag"
	"github.com/spf13/viper"

	"fixpoint/cmd/internal/modelfile"
)

// Error is a mistake in the command line or the run-time settings (exit
// code 2).
type Error struct{ Msg string }

func (e *Error) Error() string { return e.Msg }

// Errorf returns a usage *Error.
func Errorf(format string, args ...any) error { return &Error{fmt.Sprintf(format, args...)} }

// Source is where one run's settings come from.
type Source struct {
	v     *viper.Viper
	flags *pflag.FlagSet
	// File is the settings file read, or "".
	File string
	// Warn, when set, prints a warning (a rate of 1: 100% a year).
	Warn func(string)
}

// Open prepares the settings of a command whose flags are flags: the
// settings file named by --settings or FIXPOINT_SETTINGS (YAML, TOML or
// JSON; no extension means YAML), FIXPOINT_* variables and the flags.
// known lists every key a settings file may hold (the flags of every
// command).
func Open(flags *pflag.FlagSet, known []string) (*Source, error) {
	v := viper.New()
	v.SetEnvPrefix("FIXPOINT")
	v.SetEnvKeyReplacer(strings.NewReplacer("-", "_"))
	v.AutomaticEnv()
	s := &Source{v: v, flags: flags}
	path, _ := flags.GetString("settings")
	if !flags.Changed("settings") {
		path = os.Getenv("FIXPOINT_SETTINGS")
	}
	if path != "" {
		if err := s.readFile(path, known); err != nil {
			return nil, err
		}
	}
	var bindErr error
	flags.VisitAll(func(f *pflag.Flag) {
		if f.Name == "settings" || f.Name == "help" {
			return
		}
		v.SetDefault(f.Name, f.DefValue)
		if err := v.BindPFlag(f.Name, f); err != nil && bindErr == nil {
			bindErr = err
		}
	})
	return s, bindErr
}

// readFile reads the settings file and refuses unknown keys.
func (s *Source) readFile(path string, known []string) error {
	data, err := os.ReadFile(path)
	if err != nil {
		return &Error{fmt.Sprintf("%s: settings file: %s", path, modelfile.OpenProblem(err))}
	}
	if bytes.IndexByte(data, 0) >= 0 {
		return &Error{fmt.Sprintf("%s: settings file: not a text file", path)}
	}
	if k := modelfile.Sniff(data); k == modelfile.RecordsFile || k == modelfile.InventoryFile {
		return notSettings(path, k)
	}
	typ := strings.TrimPrefix(strings.ToLower(filepath.Ext(path)), ".")
	switch typ {
	case "yaml", "yml", "toml", "json":
	case "":
		typ = "yaml"
	default:
		return &Error{fmt.Sprintf("%s: settings file: unknown type %q; name it .yaml, .toml or .json", path, typ)}
	}
	s.v.SetConfigType(typ)
	if err := s.v.ReadConfig(bytes.NewReader(data)); err != nil {
		return &Error{fmt.Sprintf("%s: settings file: cannot read it as %s: %v", path, strings.ToUpper(typ), err)}
	}
	keys := s.v.AllKeys()
	slices.Sort(keys)
	for _, key := range keys {
		if !slices.Contains(known, key) {
			if k := modelfile.Sniff(data); typ != "toml" && (k == modelfile.ClassFile || k == modelfile.SystemFile || k == modelfile.FleetFile) {
				return notSettings(path, k)
			}
			return &Error{fmt.Sprintf("%s: %s: unknown setting%s", path, key, modelfile.DidYouMean(key, known))}
		}
	}
	s.File = path
	return nil
}

// settingPrefix is how where names a setting at the start of a message.
var settingPrefix = regexp.MustCompile(`^setting ([a-z][a-z-]*) \(flag --[a-z-]+ or FIXPOINT_[A-Z_]+\)`)

// Locate names the settings file in a usage error about a setting whose
// value came from it (not from its flag or FIXPOINT_ variable): "st.yaml:
// tol (settings file): ...". Other errors are returned as they are.
func (s *Source) Locate(err error) error {
	var se *Error
	if s == nil || s.File == "" || !errors.As(err, &se) {
		return err
	}
	m := settingPrefix.FindStringSubmatchIndex(se.Msg)
	if m == nil {
		return err
	}
	key := se.Msg[m[2]:m[3]]
	if _, env := os.LookupEnv("FIXPOINT_" + strings.ToUpper(strings.ReplaceAll(key, "-", "_"))); s.Changed(key) || env || !s.v.InConfig(key) {
		return err
	}
	se.Msg = fmt.Sprintf("%s: %s (settings file)%s", s.File, key, se.Msg[m[1]:])
	return err
}

// notSettings refuses a model file or CSV given as the settings file.
func notSettings(path string, k modelfile.Kind) error {
	return &Error{fmt.Sprintf("%s is %s, not a settings file: give it as the FILE argument of a command; "+
		"--settings (or FIXPOINT_SETTINGS) takes a YAML, TOML or JSON file of run-time settings such as tol: 0.01", path, k.Article())}
}

// text returns the setting of key as given.
func (s *Source) text(key string) string { return strings.TrimSpace(s.v.GetString(key)) }

// Changed reports whether the flag of key was given on the command line.
func (s *Source) Changed(key string) bool {
	f := s.flags.Lookup(key)
	return f != nil && f.Changed
}

// given reports whether key has a value that is not its default.
func (s *Source) given(key string) bool {
	f := s.flags.Lookup(key)
	return f != nil && s.text(key) != f.DefValue
}

// where names the places a setting comes from, for messages.
func where(key string) string {
	return fmt.Sprintf("setting %s (flag --%s or %s)", key, key, EnvName(key))
}

func (s *Source) number(key string) (float64, error) {
	x, err := modelfile.ParseNumber(s.text(key))
	if err != nil {
		return 0, Errorf("%s: %v", where(key), err)
	}
	return x, nil
}

func (s *Source) whole(key string) (int, error) {
	v := s.text(key)
	i, err := strconv.Atoi(v)
	if err != nil {
		return 0, Errorf("%s: %q is not a whole number", where(key), clip(v))
	}
	return i, nil
}

func (s *Source) boolean(key string) (bool, error) {
	v := s.text(key)
	b, err := strconv.ParseBool(v)
	if err != nil {
		return false, Errorf("%s: %q is not true or false", where(key), clip(v))
	}
	return b, nil
}

// ParseRate reads an annual rate written as a fraction (0.035) or a
// percentage (3.5%). A plain number above 1 is refused: it is almost always
// a percentage typed without its sign.
func ParseRate(s string) (float64, error) {
	x, err := modelfile.ParseNumber(s)
	if err != nil {
		return 0, err
	}
	if x > 1 && !strings.HasSuffix(strings.TrimSpace(s), "%") {
		return 0, fmt.Errorf("rate %s per year is over 100%%; write %s%% for %s percent", clip(s), clip(s), clip(s))
	}
	return x, nil
}

func (s *Source) rate(key string) (float64, error) {
	x, err := ParseRate(s.text(key))
	if err != nil {
		return 0, Errorf("%s: %v", where(key), err)
	}
	if x == 1 && !strings.HasSuffix(s.text(key), "%") && s.Warn != nil {
		s.Warn(fmt.Sprintf("%s: %s", where(key), modelfile.RateOfOne))
	}
	return x, nil
}

func clip(s string) string {
	if len(s) > 40 {
		return s[:37] + "..."
	}
	return s
}

// NotFor refuses settings that do not apply to the file given. A flag on
// the command line ("--method") is a usage error. A FIXPOINT_* variable
// ("FIXPOINT_METHOD=lp") or a key of the settings file ("settings file
// s.yaml: method lp") holds defaults for every command and kind of file, so
// it is ignored with a warning instead; one whose value is the default
// changes nothing and passes silently.
func (s *Source) NotFor(what, why string, keys ...string) error {
	var flags, defaults []string
	for _, k := range keys {
		switch from := s.from(k); {
		case from == "":
		case s.Changed(k):
			flags = append(flags, from)
		default:
			defaults = append(defaults, from)
		}
	}
	verb := func(n int) string {
		if n > 1 {
			return "do"
		}
		return "does"
	}
	if len(flags) > 0 {
		return Errorf("%s %s not apply to %s%s", strings.Join(flags, ", "), verb(len(flags)), what, why)
	}
	if len(defaults) > 0 && s.Warn != nil {
		s.Warn(fmt.Sprintf("%s %s not apply to %s%s; ignored", strings.Join(defaults, ", "), verb(len(defaults)), what, why))
	}
	return nil
}

// EnvName is the variable of key: FIXPOINT_MAX_ITERATIONS for
// max-iterations.
func EnvName(key string) string {
	return "FIXPOINT_" + strings.ToUpper(strings.ReplaceAll(key, "-", "_"))
}

// from names where key was given with an effect, for messages: "--key" on
// the command line, "FIXPOINT_KEY=value", "settings file F: key value", or
// "" when it was not given (or given as its default outside the command
// line).
func (s *Source) from(key string) string {
	if s.Changed(key) {
		return "--" + key
	}
	if !s.given(key) {
		return ""
	}
	if v, ok := os.LookupEnv(EnvName(key)); ok && v != "" {
		return fmt.Sprintf("%s=%s", EnvName(key), clip(strings.TrimSpace(v)))
	}
	if s.File != "" && s.v.InConfig(key) {
		return fmt.Sprintf("settings file %s: %s %s", s.File, key, clip(s.text(key)))
	}
	return ""
}
