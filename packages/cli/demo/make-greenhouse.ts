/**
 * Writes demo/greenhouse.csv: invented readings from the sensors of an invented community greenhouse ("Tansy Row",
 * four sensors every 15 minutes for 42 days). Air temperature follows the sun with a lag, passing weather fronts
 * and the vents; humidity moves against temperature; soil moisture falls between waterings. All numbers come from
 * the formulas below and a seeded generator; none are real measurements.
 *
 * Run: npx tsx packages/cli/demo/make-greenhouse.ts
 */
import { writeFileSync } from 'node:fs';
import { Random } from '@weft/core';

const random = new Random('tansy-row-greenhouse');
const rows: string[] = ['time,air_temperature_c,humidity_pct,soil_moisture_pct,light_klux'];
const perDay = 96;
let front = 0;
let soil = 38;
for (let i = 0; i < 42 * perDay; i++) {
  const day = Math.floor(i / perDay);
  const hour = (i % perDay) / 4;
  // Weather fronts: a slow random walk pulled back towards zero.
  front = 0.985 * front + 0.35 * random.normal();
  const cloud = Math.min(1, Math.max(0, 0.45 + 0.18 * front + 0.1 * random.normal()));
  const sun = Math.max(0, Math.sin((Math.PI * (hour - 6)) / 14));
  const light = Number((62 * sun * (1 - 0.75 * cloud) + Math.abs(0.6 * random.normal())).toFixed(2));
  // Air warms about two hours after the light, with a floor from the heater at night.
  const lagged = Math.max(0, Math.sin((Math.PI * (hour - 8)) / 14));
  const temperature = 13.5 + 0.04 * day + 11 * lagged * (1 - 0.55 * cloud) - 1.1 * front + 0.25 * random.normal();
  const humidity = Math.min(98, Math.max(30, 88 - 1.9 * (temperature - 13) + 4 * cloud + 1.2 * random.normal()));
  // Soil dries faster in warm hours; the volunteers water at 07:00 on even days.
  soil = Math.max(12, soil - (0.02 + 0.004 * Math.max(0, temperature - 14)));
  if (hour === 7 && day % 2 === 0) soil = Math.min(45, soil + 8);
  const stamp = new Date(Date.UTC(2026, 3, 1) + i * 15 * 60 * 1000).toISOString().slice(0, 16);
  rows.push([stamp, temperature.toFixed(2), humidity.toFixed(1), soil.toFixed(2), light.toFixed(2)].join(','));
}
writeFileSync(new URL('./greenhouse.csv', import.meta.url), `${rows.join('\n')}\n`);
console.log(`wrote ${rows.length - 1} rows`);
