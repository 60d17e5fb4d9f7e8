/** One number on the analysis page: its text, full-precision value, interval, unit and note. */
export interface NumberCell {
  key: string;
  text: string;
  value: string;
  interval: string;
  hasInterval: boolean;
  unit: string;
  note: string;
}
