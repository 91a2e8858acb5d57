package scenario

import (
	"bytes"
	_ "embed"
	"errors"
	"fmt"
	"io"
	"math"
	"os"

	"github.com/joulelaw/joulelaw/energy"
	"github.com/joulelaw/joulelaw/radio/lora"
)

// FormatVersion is the value of the "format" field this package writes and
// reads; FormatVersion1, the first format (one node and one cell for the
// whole site, no spreads, no climate, no calendar), is still read.
const (
	FormatVersion  = "joulelaw-scenario/2"
	FormatVersion1 = "joulelaw-scenario/1"
)

// ErrInvalid is wrapped by every error that reports a bad scenario file.
var ErrInvalid = errors.New("scenario: invalid")

// FieldError is one problem in a scenario: the field (a path such as
// groups[2].payload_bytes), the value found (nil when the field is missing),
// the rule it breaks and, for an error met while the model was assembled or
// computed, its Cause (an error of package energy, lora or dist). It wraps
// ErrInvalid and the cause.
type FieldError struct {
	Field string
	Value any
	Rule  string
	Cause error // nil for a problem found by the checks
}

// Error implements error. The message is one line: every control or other
// non-printing character in it (from a name or a value in the file) is
// escaped, and an echoed value is cut after MaxEcho characters.
func (e *FieldError) Error() string {
	rule := e.Rule
	if e.Cause != nil {
		rule += ": " + e.Cause.Error()
	}
	if e.Value == nil {
		return printable(fmt.Sprintf("scenario: %s: %s", e.Field, rule))
	}
	return printable(fmt.Sprintf("scenario: %s = %s: %s", e.Field, show(e.Value), rule))
}

// Unwrap returns ErrInvalid and the cause, if any.
func (e *FieldError) Unwrap() []error {
	if e.Cause == nil {
		return []error{ErrInvalid}
	}
	return []error{ErrInvalid, e.Cause}
}

// note is a description of a value (such as "7 levels"), shown unquoted.
type note string

func show(v any) string {
	switch x := v.(type) {
	case string:
		return Quote(x)
	case note:
		return cut(string(x))
	case float64:
		return fmt.Sprintf("%g", x)
	default:
		return cut(fmt.Sprint(x))
	}
}

// Scenario is a checked fleet description, in SI units (A, V, s, m, C) except
// radio levels (dB, dBm). Parse returns a fresh value each time; treat its
// slices as read-only (WithCounts returns a modified copy).
type Scenario struct {
	Site        string
	Description string
	Region      lora.Region
	Environment Environment
	Nodes       []Node // node hardware descriptions, named; groups refer to them
	Cells       []Cell // cell descriptions, named; groups refer to them
	// Climate is the site's year of temperature (nil in a format 1 file:
	// the cells' reference temperature all year).
	Climate *energy.Climate
	// StartMonth is the month of deployment, 0 (January) to 11.
	StartMonth int
	Shared     energy.SharedSpread // what the whole fleet shares
	Gateways   []Gateway
	Groups     []Group
	Plan       Plan
	Design     *Design // the optional design section; nil when absent
}

// NodeOf returns the node hardware of group g.
func (s Scenario) NodeOf(g Group) Node { return s.Nodes[g.Node] }

// CellOf returns the cell of group g.
func (s Scenario) CellOf(g Group) Cell { return s.Cells[g.Cell] }

// Cell is a cell description: its data-sheet values (Spec, checked with
// energy.NewBattery), its unit-to-unit capacity spread, calendar life,
// temperature behaviour and, optionally, its voltage under load.
type Cell struct {
	Spec         energy.BatterySpec
	CapacitySD   float64              // relative sd of a cell's capacity (normal factor), energy.NodeSpread.Capacity
	CalendarLife float64              // rated service life from manufacture, s; 0 for none
	Thermal      *energy.Thermal      // nil in a format 1 file; the node's floor doubling is filled in per group
	Voltage      *energy.VoltageCurve // nil: Spec.UsableFraction holds
}

// Environment is the site's path-loss model:
//
//	PL(d) = ReferenceLoss + 10·LossExponent·log10(d/ReferenceDistance) + X,  X ~ Normal(0, ShadowingSD)
type Environment struct {
	ReferenceDistance  float64 // d0, m
	ReferenceLoss      float64 // PL(d0), dB
	LossExponent       float64 // n, dimensionless
	ShadowingSD        float64 // dB
	GatewayGain        float64 // gateway antenna gain less cable losses, dB
	NoiseFigure        float64 // gateway receiver noise figure, dB
	InstallationMargin float64 // margin kept above the demodulation floor, dB
}

// Node is the electrical description of a node design (board and radio).
type Node struct {
	Name          string
	Voltage       float64         // rail voltage at which the currents are given, V
	Sleep         float64         // floor current between cycles, A
	Wait          float64         // current while waiting for the receive windows, A
	Receive       float64         // current while listening or receiving, A
	WindowSymbols int             // preamble symbols listened for in an empty window
	WindowMargin  float64         // extra listening time per empty window for clock error, s
	Transmit      []TransmitLevel // one per TXPower index of the region, by index

	Supply        energy.Supply // the path from the cell to the rail
	Brownout      float64       // the node's brown-out voltage, V (used with a cell's voltage curve)
	FloorLogSD    float64       // board-to-board log-sd of the sleep current, energy.NodeSpread.Floor
	ActiveSD      float64       // board-to-board relative sd of the active energy, energy.NodeSpread.Active
	FloorDoubling float64       // °C per doubling of the sleep current; 0 for none
}

// TransmitLevel is the supply current at one transmit power.
type TransmitLevel struct {
	EIRP    float64 // dBm
	Current float64 // A
}

// TransmitCurrent returns the current (A) drawn while transmitting at the
// given EIRP (dBm), and false when the scenario lists no such level.
func (n Node) TransmitCurrent(eirp float64) (float64, bool) {
	for _, t := range n.Transmit {
		if math.Abs(t.EIRP-eirp) < 1e-9 {
			return t.Current, true
		}
	}
	return 0, false
}

// Gateway is a gateway's name and position (m, on a local flat grid).
type Gateway struct {
	Name string
	X, Y float64
	// Channels are the uplink channels the gateway listens on, and so the
	// channels its nodes are masked to; the zero mask means every channel
	// of the region's plan (a US902-928 or AU915-928 gateway of eight
	// receive paths hears one block: lora.Region.ChannelBlock).
	Channels lora.ChannelMask
}

// Group is a set of identical nodes placed uniformly over an annulus around
// their gateway.
type Group struct {
	Name             string
	Nodes            int
	Gateway          int     // index into Scenario.Gateways
	InnerRadius      float64 // m
	OuterRadius      float64 // m
	Payload          int     // application payload, bytes
	Interval         float64 // mean reporting period, s
	Jitter           float64 // half-width of the uniform period jitter, s
	Confirmed        bool
	MaxTransmissions int     // NbTrans, 1 … 15: transmissions of a confirmed uplink, repetitions of an unconfirmed one
	AnswerShare      float64 // share of received uplinks the network answers
	RX1Share         float64 // share of answers sent in RX1
	DownlinkPayload  int     // application payload of an answer, bytes
	DownlinkLoss     float64 // probability a sent answer is not received
	Work             []Step  // done before each uplink, in order
	Node             int     // index into Scenario.Nodes
	Cell             int     // index into Scenario.Cells
	StorageTime      float64 // time from the cells' manufacture to deployment, s
	// RX1DROffset is the RX1 data-rate offset the network sets (0 … the
	// region's RX1DROffsets() − 1).
	RX1DROffset int
	// RX2 is the second window as the network sets it; the zero value
	// keeps the region's default frequency and data rate.
	RX2 lora.RX2Window
	// RejoinEvery makes the group's out-of-reach nodes send a Join-request
	// in one report of RejoinEvery on average (lora.ClassA.JoinEvery); 0
	// for none.
	RejoinEvery int
}

// Step is one piece of work before the uplink: a constant current for a
// duration uniform in Duration ± Spread.
type Step struct {
	Name     string
	Current  float64 // A
	Duration float64 // mean, s
	Spread   float64 // half-width, s
}

// Plan is the replacement plan to evaluate.
type Plan struct {
	ReplaceAfter   float64 // s
	AcceptableRisk float64 // probability of any failure before ReplaceAfter
}

// TotalNodes returns the number of nodes over all groups.
func (s Scenario) TotalNodes() int {
	n := 0
	for _, g := range s.Groups {
		n += g.Nodes
	}
	return n
}

// WithCounts returns a copy of s whose groups have the given node counts
// (one per group, each >= 1).
func (s Scenario) WithCounts(counts []int) (Scenario, error) {
	if len(counts) != len(s.Groups) {
		return Scenario{}, &FieldError{Field: "counts", Value: len(counts), Rule: fmt.Sprintf("need one count per group (%d)", len(s.Groups))}
	}
	c := s
	c.Gateways = append([]Gateway(nil), s.Gateways...)
	c.Groups = make([]Group, len(s.Groups))
	for i, g := range s.Groups {
		if counts[i] < 1 || counts[i] > maxNodes {
			return Scenario{}, &FieldError{Field: fmt.Sprintf("counts[%d]", i), Value: counts[i], Rule: fmt.Sprintf("must be an integer in [1, %d]", maxNodes)}
		}
		g.Work = append([]Step(nil), g.Work...)
		g.Nodes = counts[i]
		c.Groups[i] = g
	}
	c.Nodes = make([]Node, len(s.Nodes))
	for i, n := range s.Nodes {
		n.Transmit = append([]TransmitLevel(nil), n.Transmit...)
		c.Nodes[i] = n
	}
	c.Cells = append([]Cell(nil), s.Cells...)
	return c, nil
}

//go:embed demo.json
var demoJSON []byte

//go:embed scenario.schema.json
var schemaJSON []byte

// SchemaJSON returns a copy of the JSON Schema (draft 2020-12) of format 2
// files, scenario.schema.json beside this package: editors validate with
// it. The reader checks more than the schema can say (FORMAT.md lists the
// rules across fields).
func SchemaJSON() []byte { return append([]byte(nil), schemaJSON...) }

// DemoJSON returns a copy of the built-in demo scenario file.
func DemoJSON() []byte { return append([]byte(nil), demoJSON...) }

// Demo returns the built-in demo scenario (see the package doc). It panics
// only if the embedded file is broken, which the tests rule out.
func Demo() Scenario {
	s, err := Parse(demoJSON)
	if err != nil {
		panic("scenario: embedded demo is invalid: " + err.Error()) // panic-ok: the tests parse the embedded file
	}
	return s
}

// Load reads and parses the scenario file at path. The path must name a
// regular file (not a directory, device or named pipe, which are refused
// before they are opened) of at most MaxFileBytes bytes.
func Load(path string) (Scenario, error) {
	fi, err := os.Stat(path)
	if err != nil {
		return Scenario{}, fmt.Errorf("scenario: %w", err)
	}
	if !fi.Mode().IsRegular() {
		return Scenario{}, &FieldError{Field: "(file)", Value: note(fileKind(fi.Mode())), Rule: "must be a regular file (not a directory, device or named pipe)"}
	}
	if fi.Size() > MaxFileBytes {
		return Scenario{}, &FieldError{Field: "(file)", Value: note(fmt.Sprintf("%d bytes", fi.Size())), Rule: fmt.Sprintf("is larger than the %d-byte cap (MaxFileBytes)", MaxFileBytes)}
	}
	f, err := os.Open(path)
	if err != nil {
		return Scenario{}, fmt.Errorf("scenario: %w", err)
	}
	defer f.Close()
	return Read(f)
}

// Read reads a scenario file from r and parses it (Parse). It reads at most
// MaxFileBytes + 1 bytes: a longer stream is refused without reading
// further.
func Read(r io.Reader) (Scenario, error) {
	data, err := io.ReadAll(io.LimitReader(r, MaxFileBytes+int64(len(bom))+1))
	if err != nil {
		return Scenario{}, fmt.Errorf("scenario: %w", err)
	}
	if len(bytes.TrimPrefix(data, bom)) > MaxFileBytes {
		return Scenario{}, &FieldError{Field: "(file)", Value: note("more than MaxFileBytes"), Rule: fmt.Sprintf("is larger than the %d-byte cap (MaxFileBytes)", MaxFileBytes)}
	}
	return Parse(data)
}

// fileKind names the kind of a file that is not a regular one.
func fileKind(m os.FileMode) string {
	switch {
	case m.IsDir():
		return "a directory"
	case m&os.ModeNamedPipe != 0:
		return "a named pipe"
	case m&os.ModeCharDevice != 0:
		return "a character device"
	case m&os.ModeDevice != 0:
		return "a device"
	case m&os.ModeSocket != 0:
		return "a socket"
	}
	return "not a regular file"
}
