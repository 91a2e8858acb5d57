package ble

// DiscoveryCell returns the cell width of d's grid, s.
func DiscoveryCell(d Discovery) float64 { return d.h }
