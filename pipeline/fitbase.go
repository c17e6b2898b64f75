package pipeline

import (
	"fmt"
	"math"
	"strings"
)

// The defaults that follow the base (issue 15, item 8). A job key of 0 asks
// for the value the rule below gives for the measured base diameter D. The
// rules are ours, not a standard's: the hob-test standard IEC 60350-2 ties
// its test pots and water loads to the zone, but its table could not be
// read for this project, so none of its numbers is used.
const (
	// fitZoneMinMM and fitZoneMaxMM bound the fitted zone: household
	// radiant zones are about 120 to 300 mm across (hob.zone_diameter_mm's
	// own range note; from memory).
	fitZoneMinMM = 120
	fitZoneMaxMM = 300
	// fitPowerDensityWM2 is the rated power per zone area of the old
	// default zone, 1800 W over 180 mm (70.7 kW/m²; ours, a common radiant
	// zone's rating).
	fitPowerDensityWM2 = 1800 / (math.Pi * 0.09 * 0.09)
	// fitWaterDensityKgM3 is water at 20 °C (Incropera Table A.6,
	// interpolated), as the heat-up's wetted-wall estimate uses.
	fitWaterDensityKgM3 = 998.2
)

// FittedDefaults are the job values a 0 key left to the base's size, as
// the report gives them. A field is 0 when the job set the key itself.
type FittedDefaults struct {
	Rule           string  `json:"rule"`
	WaterKg        float64 `json:"water_kg,omitempty"`
	ZoneDiameterMM float64 `json:"zone_diameter_mm,omitempty"`
	HeaterPowerW   float64 `json:"heater_power_w,omitempty"`
}

// fitRule states the rules in words, for the report and the job file.
const fitRule = "water: filled to a third of the base diameter deep over the pan's inner diameter (the base's when unset); " +
	"zone: the base diameter to the nearest 5 mm, kept within 120 to 300 mm; " +
	"power: the zone's area at 70.7 kW/m² (1800 W on 180 mm); our rules"

// FitZoneMM is the zone diameter fitted to a base of diameter baseMM, mm:
// the base diameter rounded to 5 mm, within 120 to 300 mm (our rule).
func FitZoneMM(baseMM float64) float64 {
	return math.Min(fitZoneMaxMM, math.Max(fitZoneMinMM, 5*math.Round(baseMM/5)))
}

// FitHeaterPowerW is the rated power of a zone of diameter zoneMM, W: its
// area at 70.7 kW/m², the old default's 1800 W on 180 mm, to 10 W.
func FitHeaterPowerW(zoneMM float64) float64 {
	r := zoneMM / 2e3
	return 10 * math.Round(fitPowerDensityWM2*math.Pi*r*r/10)
}

// FitWaterKg is the water load for a base of diameter baseMM and an open
// water surface of innerMM (0 = the base's), kg: a fill a third of the
// base diameter deep, ρ·π/4·d_inner²·D/3 with ρ = 998.2 kg/m³, to 10 g and
// at least 10 g. The wall it wets is then D/3 high whatever the size, so
// the heat-up never models a wall taller than the pan is wide.
func FitWaterKg(baseMM, innerMM float64) float64 {
	if innerMM == 0 {
		innerMM = baseMM
	}
	d, depth := innerMM/1e3, baseMM/3e3
	kg := fitWaterDensityKgM3 * math.Pi / 4 * d * d * depth
	return math.Max(0.01, math.Round(kg*100)/100)
}

// fitToBase replaces the job's 0 keys for water.mass_kg,
// hob.zone_diameter_mm and hob.heater_power_w by the rules above for a base
// of diameter baseMM. It returns what it set (nil when nothing), or an
// error naming the keys when a fitted zone no longer holds the job's rod.
func (j *Job) fitToBase(baseMM float64) (*FittedDefaults, error) {
	var f FittedDefaults
	if j.Water.MassKg == 0 {
		j.Water.MassKg = FitWaterKg(baseMM, j.Pan.InnerDiameterMM)
		f.WaterKg = j.Water.MassKg
	}
	if j.Hob.ZoneDiameterMM == 0 {
		j.Hob.ZoneDiameterMM = FitZoneMM(baseMM)
		f.ZoneDiameterMM = j.Hob.ZoneDiameterMM
		if j.Hob.RodLengthMM != 0 && j.Hob.RodLengthMM > j.Hob.ZoneDiameterMM+2*j.Hob.MarginMM ||
			math.Abs(j.Hob.RodOffsetMM) > j.Hob.ZoneDiameterMM/2 {
			return nil, &KeyError{Key: "hob.zone_diameter_mm", Also: []string{"hob.rod_length_mm", "hob.rod_offset_mm"}, Msg: fmt.Sprintf(
				"the zone fitted to this %s mm base is %s mm across, too small for hob.rod_length_mm = %s mm at hob.rod_offset_mm = %s mm; set hob.zone_diameter_mm, or shorten the rod",
				fmtNum(math.Round(baseMM)), fmtNum(j.Hob.ZoneDiameterMM), fmtNum(j.Hob.RodLengthMM), fmtNum(j.Hob.RodOffsetMM))}
		}
	}
	if j.Hob.HeaterPowerW == 0 {
		j.Hob.HeaterPowerW = FitHeaterPowerW(j.Hob.ZoneDiameterMM)
		f.HeaterPowerW = j.Hob.HeaterPowerW
	}
	if f == (FittedDefaults{}) {
		return nil, nil
	}
	f.Rule = fitRule
	return &f, nil
}

// fittedText lists the fitted values for the printed summary.
func fittedText(f *FittedDefaults) string {
	var parts []string
	if f.ZoneDiameterMM > 0 {
		parts = append(parts, fmt.Sprintf("zone %s mm", fmtNum(f.ZoneDiameterMM)))
	}
	if f.HeaterPowerW > 0 {
		parts = append(parts, fmt.Sprintf("zone power %s W", fmtNum(f.HeaterPowerW)))
	}
	if f.WaterKg > 0 {
		parts = append(parts, fmt.Sprintf("water %s kg", fmtNum(f.WaterKg)))
	}
	return strings.Join(parts, ", ") + " (set them in the job, or --zone-mm, --water-kg)"
}
