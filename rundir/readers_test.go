package rundir

import (
	"os"
	"path/filepath"
	"testing"
)

// FuzzParseCurve checks that the lnl_beta.csv reader never panics and
// returns columns of equal length.
func FuzzParseCurve(f *testing.F) {
	for _, s := range []string{
		"beta,mean_ln_like,mean_err,var_ln_like,tau_steps,ess\n0,-900,30,1e6,5,97\n1,-60,0.1,2,7,80\n",
		"beta,mean_ln_like,mean_err\n0.5,-1,0.1\n",
		"beta,mean_ln_like\n0,1\n",
		"beta,mean_ln_like,mean_err\n0,x,1\n",
		"", "\n\n", "beta,mean_ln_like,mean_err\n0,1\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, raw []byte) {
		b, m, e, err := ParseCurve("lnl_beta.csv", raw)
		if err == nil && (len(b) != len(m) || len(b) != len(e) || len(b) == 0) {
			t.Fatalf("%d beta, %d means, %d errors", len(b), len(m), len(e))
		}
	})
}

// FuzzReadTraces checks that the thinning chain reader never panics and
// keeps, per parameter, the same walkers with the same number of steps.
func FuzzReadTraces(f *testing.F) {
	for _, s := range []string{
		"# step,walker,ln_post,ln_like,a,b\n1,0,-1,-1,0.5,2\n1,1,-1,-1,0.6,2\n2,0,-1,-1,0.5,2\n2,1,-1,-1,0.7,3\n",
		"# step,walker,a\n1,0,1\n", "# step,walker,a\n", "step,walker,a\n1,0,1\n", "# step,walker,a\n1,0\n",
		"# step,walker,a\n0,0,1\n", "# step,walker,a\n1,-1,1\n", "# step,walker,a\n1,3,x\n", "",
	} {
		f.Add([]byte(s), uint8(1))
	}
	f.Fuzz(func(t *testing.T, raw []byte, every uint8) {
		path := filepath.Join(t.TempDir(), "chain.csv")
		if err := os.WriteFile(path, raw, 0o644); err != nil {
			t.Fatal(err)
		}
		tr, err := ReadTraces(path, []string{"a"}, max(1, int(every)))
		if err != nil {
			return
		}
		if len(tr) != 1 || len(tr[0]) == 0 {
			t.Fatalf("accepted a chain with no rows: %+v", tr)
		}
	})
}

// TestReadTraces reads a chain of two walkers over three steps, keeping
// every second step (steps 1 and 3).
func TestReadTraces(t *testing.T) {
	path := filepath.Join(t.TempDir(), "chain.csv")
	raw := "# step,walker,ln_post,ln_like,a\n1,0,-1,-1,10\n1,1,-1,-1,20\n2,0,-1,-1,11\n2,1,-1,-1,21\n3,0,-1,-1,12\n3,1,-1,-1,22\n"
	if err := os.WriteFile(path, []byte(raw), 0o644); err != nil {
		t.Fatal(err)
	}
	tr, err := ReadTraces(path, []string{"a"}, 2)
	if err != nil {
		t.Fatal(err)
	}
	want := [][]float64{{10, 12}, {20, 22}}
	for k, w := range want {
		if len(tr[0][k]) != 2 || tr[0][k][0] != w[0] || tr[0][k][1] != w[1] {
			t.Errorf("walker %d: %v, want %v", k, tr[0][k], w)
		}
	}
}
