package recipe

import (
	"strings"
	"time"
)

// Backend says where the stages run.
type Backend struct {
	Kind      string // "local" (default) or "slurm"
	Partition string
	Account   string
	QOS       string
	Memory    string        // per job, as sbatch --mem takes it: "4G"
	Nodes     int           // per job; 0: let Slurm choose (1)
	Extra     []string      // further sbatch options, each "--name=value"
	Poll      time.Duration // how often squeue is asked; default 15 s
	Line      int
}

type rawBackend struct {
	Kind      string   `toml:"kind"`
	Partition string   `toml:"partition"`
	Account   string   `toml:"account"`
	QOS       string   `toml:"qos"`
	Memory    string   `toml:"memory"`
	Nodes     int      `toml:"nodes"`
	Extra     []string `toml:"extra"`
	Poll      string   `toml:"poll"`
}

func checkBackend(pr *problems, r *Recipe, b rawBackend) {
	r.Backend = Backend{Kind: b.Kind, Partition: b.Partition, Account: b.Account, QOS: b.QOS, Memory: b.Memory,
		Nodes: b.Nodes, Extra: b.Extra, Poll: 15 * time.Second, Line: pr.line("backend")}
	if r.Backend.Kind == "" {
		r.Backend.Kind = "local"
	}
	if r.Backend.Kind != "local" && r.Backend.Kind != "slurm" {
		pr.at("backend.kind", "backend kind must be \"local\" or \"slurm\" (got %q)", b.Kind)
	}
	// These values are written into batch scripts: allow only what the
	// options can hold, so nothing else reaches the script's text.
	for key, v := range map[string]string{"partition": b.Partition, "account": b.Account, "qos": b.QOS, "memory": b.Memory} {
		if v != "" && !safeWord(v) {
			pr.at("backend."+key, "%s %q may hold only letters, digits and . _ - , : +", key, v)
		}
	}
	if b.Nodes < 0 {
		pr.at("backend.nodes", "nodes cannot be negative")
	}
	for i, x := range b.Extra {
		name, val, _ := strings.Cut(x, "=")
		if !strings.HasPrefix(name, "--") || !safeWord(strings.TrimPrefix(name, "--")) || (val != "" && !safeWord(val)) {
			pr.at("backend.extra", "extra option %d (%q) must look like \"--name=value\" with letters, digits and . _ - , : + only", i+1, x)
		}
	}
	if b.Poll != "" {
		d, err := time.ParseDuration(b.Poll)
		if err != nil || d < time.Second {
			pr.at("backend.poll", "poll %q must be a duration of at least 1s, like \"30s\"", b.Poll)
		}
		r.Backend.Poll = d
	}
}

func safeWord(s string) bool {
	for _, c := range s {
		switch {
		case c >= 'a' && c <= 'z', c >= 'A' && c <= 'Z', c >= '0' && c <= '9':
		case strings.ContainsRune("._-,:+", c):
		default:
			return false
		}
	}
	return s != ""
}
