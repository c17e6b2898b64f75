package pipeline

// Values of the job key outputs.fields: how fields.vti is written.
const (
	FieldsCompressed = "compressed" // zlib blocks in a raw appended section (WriteVTICompressed)
	FieldsPlain      = "plain"      // uncompressed base64 arrays (WriteVTI)
	FieldsOff        = "off"        // not written
)

// OutputsJob chooses which optional outputs a scan writes.
type OutputsJob struct {
	Fields string `toml:"fields"` // FieldsCompressed, FieldsPlain or FieldsOff
}
