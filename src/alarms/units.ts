/** Unit of a result quantity, read from the suffix of its name (units are in every name). */
export function unitOfQuantity(quantity: string): string {
  if (quantity.startsWith('ratio_')) return '1';
  if (quantity.endsWith('_MPa')) return 'MPa';
  if (quantity.endsWith('_micro')) return 'microstrain';
  if (quantity.endsWith('_degC')) return 'degC';
  if (quantity.endsWith('_deg')) return 'deg';
  if (quantity.endsWith('_s')) return 's';
  return '';
}
