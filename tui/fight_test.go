package tui

import (
	"math"
	"strings"
	"testing"

	"github.com/charmbracelet/x/ansi"
	"github.com/charmbracelet/x/exp/golden"

	"railyard/switchsim"
	"railyard/switchsim/trace"
)

// The Why view of a contested node draws its fight beside the panels
// (demo:strong_keeper after its second step: the keeper's keep.n holds s
// at 0.10 V against the input gate). The goldens were read by hand: the
// head "s is L: value 0, weak, 0.10 V", its margin 0.63 V below VIL and
// its write margin 0.76 V from the forward inverter's VM 0.86 V (0.10 V
// reads as a 0); the plot's two curves, the 1 side (pass.n, pass.p) falling
// from the top left and the 0 side (keep.n) rising off the top, meeting
// above the ▲ at 0.10 V, with L, M and H under 0.74, 0.86 and 0.96 V on
// the 0 to 1.80 V axis; 182 uA each way at the crossing. The test checks
// the marker columns and the crossing's current itself.
func TestGoldenFight(t *testing.T) {
	for _, c := range []struct {
		name  string
		w, h  int
		ascii bool
	}{{"fight_80x24", 80, 24, false}, {"fight_120x40", 120, 40, false}, {"fight_ascii_80x24", 80, 24, true}} {
		t.Run(c.name, func(t *testing.T) {
			s := openDemo(t, "strong_keeper", switchsim.Physical)
			m := New(s, c.w, c.h, Options{ASCII: c.ascii})
			press(m, "n", "n", "tab", "down", "down", "enter")
			v := m.View()
			checkScreen(t, v, c.w, c.h)
			for _, want := range []string{"s is L: value 0, weak, 0.10 V", "Margin 0.63 V", "Write margin 0.76 V", "s at 0.10 V: 182 uA each way"} {
				if !strings.Contains(v, want) {
					t.Errorf("no %q:\n%s", want, v)
				}
			}
			n := node(t, s, "s")
			f, ok := s.Fight(n)
			if !ok {
				t.Fatal("s is in no fight")
			}
			if up, down := f.Currents(f.Volts); math.Abs(up-down) > 1e-3*up || math.Abs(up-182e-6) > 0.5e-6 {
				t.Errorf("at the crossing %.4f V: %g A in, %g A out", f.Volts, up, down)
			}
			// The markers' columns on the right panel: round(V / vdd x (cols - 1)).
			right := m.w - m.leftWidth() - 1
			cols := min(right-7, 64)
			tick := "▲"
			if c.ascii {
				tick = "^"
			}
			for _, mk := range []struct {
				g string
				v float64
			}{{tick, f.Volts}, {"L", f.VIL}, {"M", f.StageVM}, {"H", f.VIH}} {
				want := int(math.Round(mk.v / 1.8 * float64(cols-1)))
				if got := markerCol(v, m.leftWidth()+1, mk.g); got != want {
					t.Errorf("%s at plot column %d, want %d (%.3f V)", mk.g, got, want, mk.v)
				}
			}
			golden.RequireEqual(t, []byte(v))
		})
	}
}

// markerCol finds the marker line of the plot (the line holding L, M and
// H and nothing else but the tick) and returns g's column in the plot.
func markerCol(view string, left int, g string) int {
	for _, l := range strings.Split(ansi.Strip(view), "\n") {
		r := []rune(l)
		if len(r) <= left+7 {
			continue
		}
		plot := string(r[left+7:])
		if strings.ContainsAny(plot, "LMH") && strings.Trim(plot, " LMH▲^") == "" {
			return len([]rune(plot[:strings.Index(plot, g)]))
		}
	}
	return -1
}

// The corner key cycles nominal, slow, fast, nominal on demo:keeper_corner,
// re-simulating the history; the header names the corner; the writes of a
// 1 fail at slow only.
func TestCornerKey(t *testing.T) {
	s := openDemo(t, "keeper_corner", switchsim.Physical)
	m := New(s, 120, 40, Options{})
	press(m, "n", "n")
	if m.failed != 0 {
		t.Fatalf("nominal: %d failed steps", m.failed)
	}
	for _, c := range []struct {
		corner string
		failed int
		head   string
	}{{"slow", 1, "physical @slow"}, {"fast", 0, "physical @fast"}, {"", 0, "physical  step"}} {
		press(m, "c")
		if m.Session().Corner() != c.corner || m.Session().Len() != 3 || m.failed != c.failed {
			t.Errorf("after c: corner %q, %d actions, %d failed steps; want %q, 3, %d (%s)", m.Session().Corner(), m.Session().Len(), m.failed, c.corner, c.failed, m.Status())
		}
		if !strings.Contains(strings.Split(m.View(), "\n")[0], c.head) {
			t.Errorf("header:\n%s", strings.Split(m.View(), "\n")[0])
		}
	}
	if !strings.Contains(m.Status(), "corner nominal") {
		t.Errorf("status %q", m.Status())
	}
	// The new session records its own trace, at its corner.
	press(m, "c")
	var b strings.Builder
	if _, err := trace.Write(m.Session(), &b, ""); err != nil || !strings.Contains(b.String(), "\ncorner slow\n") {
		t.Errorf("the slow session's trace (%v):\n%s", err, b.String())
	}
	// A design with no corners, and ideal mode, say why nothing changes.
	plain := New(openDemo(t, "mux2_tgate", switchsim.Physical), 80, 24, Options{})
	press(plain, "c")
	if !strings.Contains(plain.Status(), "names no technology corners") {
		t.Errorf("no corners: %q", plain.Status())
	}
	ideal := New(openDemo(t, "keeper_corner", switchsim.Ideal), 80, 24, Options{})
	press(ideal, "c")
	if !strings.Contains(ideal.Status(), "need physical mode") || ideal.Session().Corner() != "" {
		t.Errorf("ideal: %q", ideal.Status())
	}
}

// Devices in physical mode (issue 18 items 3 and 5): demo:mux2_pass after
// its second step passes the register's 1 as a degraded 1.14 V, which
// leaves buf1.p (off by logic) partly on: its row reads on~ and its line
// gives the static current, 5.2 uA as the partial-on warning says. The R on
// column is the delay's estimate r_sq L / W: pass_reg, an nMOS of 0.36/0.18
// um, 12.5 kohm/sq x 0.18 / 0.36 = 6.25 kohm (the generic preset's rn).
// Ideal mode shows neither; a device fully on or off is never on~.
func TestDevicesPartlyOnAndOhms(t *testing.T) {
	s := openDemo(t, "mux2_pass", switchsim.Physical)
	m := New(s, 120, 40, Options{})
	press(m, "n", "n", "d")
	v := m.View()
	if l := lineWith(v, "buf1.p", "pmos"); !strings.Contains(l, "on~") {
		t.Errorf("buf1.p's row %q is not partly on", l)
	}
	if l := lineWith(v, "buf1.n", "nmos"); strings.Contains(l, "on~") {
		t.Errorf("buf1.n's row %q: on by logic, not partly on", l)
	}
	if l := lineWith(v, "pass_reg", "nmos"); !strings.Contains(l, "6.25 kohm") {
		t.Errorf("pass_reg's row %q lacks R on 6.25 kohm", l)
	}
	// select buf1.p: its line gives the current
	press(m, "tab", "tab")
	for i := 0; i < 20 && !strings.Contains(lastLine(m), "▸ buf1.p "); i++ {
		press(m, "down")
	}
	if l := lastDetail(m.View()); !strings.Contains(l, "partly on 5.2 uA static") {
		t.Errorf("buf1.p's line %q lacks its partial conduction and current", l)
	}
	ideal := New(openDemo(t, "mux2_pass", switchsim.Ideal), 120, 40, Options{})
	press(ideal, "n", "n", "d")
	if v := ideal.View(); strings.Contains(v, "on~") || strings.Contains(v, "R on") {
		t.Errorf("ideal mode shows physical figures:\n%s", v)
	}
}

func lastLine(m *Model) string { return lastDetail(m.View()) }

// lastDetail is the Devices view's last line (the selected device whole).
func lastDetail(view string) string {
	lines := strings.Split(view, "\n")
	for i := len(lines) - 3; i >= 0; i-- { // above the status and key lines
		if l := lines[i]; strings.Contains(l, "▸ ") && strings.Contains(l, "│") {
			return l
		}
	}
	return ""
}
