import { SIGNAL_VW_HZ, type ElementModel, type GroupModel } from './group-model.js';
import { horner, vibratingWireDigits } from './thermal.js';

/**
 * A new reference state for a group: readings taken as its zero, at a temperature taken as its
 * zero-reading temperature. With the same readings at that temperature the group then shows no
 * mechanical strain: the indicated strain is zero, and the thermal output, the reference body's and
 * the host's free expansion are all referenced to the new temperature. Built once per rezero (it
 * allocates a copy; the pseudo-inverses are shared, they depend on geometry only). Pure.
 */

/** An element's zero in the model's unit from a reading in the signal's unit (a Hz reading becomes digits). */
export function zeroOfReading(el: ElementModel, reading: number): number {
  return el.signal === SIGNAL_VW_HZ ? vibratingWireDigits(reading) : reading;
}

function rezeroElement(el: ElementModel, reading: number, zeroTempC: number): ElementModel {
  return {
    ...el,
    zero: zeroOfReading(el, reading),
    thermalOutputAtZeroMicro: el.thermalOutput.length === 0 ? 0 : horner(el.thermalOutput, zeroTempC),
  };
}

/**
 * `model` with `readings` (one per element, the signal's unit) as the zero, `companionReading` as
 * the companion gauge's (ignored without one) and `zeroTempC` as the zero-reading temperature.
 * The gauge factor's reference temperature is the gauge's, not the zero's, and stays.
 */
export function rezeroedModel(model: GroupModel, readings: ArrayLike<number>, companionReading: number, zeroTempC: number): GroupModel {
  if (readings.length !== model.m) throw new Error(`rezero of ${model.id}: ${readings.length} readings for ${model.m} elements`);
  return {
    ...model,
    elements: model.elements.map((el, i) => rezeroElement(el, readings[i], zeroTempC)),
    companion: model.companion === null ? null : rezeroElement(model.companion, companionReading, zeroTempC),
    zeroTempC,
  };
}
