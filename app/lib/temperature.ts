export type TemperatureUnit = "F" | "C";

export const toCelsius = (value: number, unit: TemperatureUnit) => (unit === "C" ? value : ((value - 32) * 5) / 9);
export const fromCelsius = (c: number, unit: TemperatureUnit) => (unit === "C" ? c : (c * 9) / 5 + 32);

/** Formats a °C value in the site's unit, rounded to whole degrees as cooling logs are read. */
export function formatTemperature(c: number, unit: TemperatureUnit, digits = 0) {
  return `${fromCelsius(c, unit).toFixed(digits)} °${unit}`;
}
