import { describe, expect, it } from 'vitest';
import { WeftError } from '@weft/core';
import { builtInPlans, checkPlans, isNamespacedKind, namespacedKinds, planOf } from '@weft/cells/description';
import { mguPlan } from './mgu.js';

function refused(plans: unknown): string {
  try {
    checkPlans(plans, 'options.plans');
  } catch (error) {
    expect(error).toBeInstanceOf(WeftError);
    return (error as Error).message;
  }
  return 'accepted';
}

describe('the plans weft knows', () => {
  it("takes owner.name words as kinds of your own, and the description's such kinds once each", () => {
    expect(['lab.mgu', 'a.b.c', 'my-lab.cell_2'].map(isNamespacedKind)).toEqual([true, true, true]);
    expect(['mgu', 'lstm', '.mgu', 'lab.', 'lab..mgu', '1lab.mgu', 'lab mgu.x'].map(isNamespacedKind)).toEqual([
      false,
      false,
      false,
      false,
      false,
      false,
      false,
    ]);
    const layers = [
      { cell: 'lab.mgu', hidden: 2 },
      { cell: 'gru', hidden: 2 },
      { cell: 'lab.mgu', hidden: 2 },
    ];
    expect(namespacedKinds({ kind: 'encoder-decoder', encoder: { layers }, decoder: { layers: [{ cell: 'lab.other', hidden: 2 }] } })).toEqual([
      'lab.mgu',
      'lab.other',
    ]);
    expect(namespacedKinds('not a description')).toEqual([]);
  });

  it("finds the built-in cells first, then a program's own, and nothing for a kind neither knows", () => {
    expect(planOf('gru')).toBe(builtInPlans.gru);
    expect(planOf('gru', { gru: mguPlan })).toBe(builtInPlans.gru);
    expect(planOf('test.mgu', { 'test.mgu': mguPlan })).toBe(mguPlan);
    expect(planOf('test.mgu')).toBeNull();
    expect(planOf('toString', {})).toBeNull();
  });

  it('accepts plans filed under their own kinds and refuses, naming the entry, anything else', () => {
    expect(refused({ 'test.mgu': mguPlan })).toBe('accepted');
    expect(refused(undefined)).toBe('accepted');
    expect(refused([mguPlan])).toMatch(/options\.plans.*an object of cell plans by kind/);
    expect(refused({ plain: { ...mguPlan, kind: 'plain' } })).toMatch(/options\.plans\.plain.*a namespaced kind of your own such as 'lab\.mgu'/);
    expect(refused({ mgu: { ...mguPlan, kind: 'mgu' } })).toMatch(/options\.plans\.mgu.*namespaced/);
    expect(refused({ 'test.mgu': { kind: 'test.mgu' } })).toMatch(/options\.plans\.test\.mgu.*a cell plan.*an object with kind/);
    expect(refused({ 'test.x': mguPlan })).toMatch(/options\.plans\.test\.x\.kind.*"test\.x".*"test\.mgu"/);
  });
});
