import { describe, expect, it } from 'vitest';
import { LabelOptionsError, resolveLabelOptions, takeLabel } from './label-options.js';

describe('resolveLabelOptions', () => {
  it('answers null without a label column, and refuses the other options alone', () => {
    expect(resolveLabelOptions({})).toBeNull();
    expect(() => resolveLabelOptions({ labelDraw: 'archive' })).toThrow(/labelDraw applies only with labelField/);
    expect(() => resolveLabelOptions({ labelField: ' ' })).toThrow(/labelField is empty/);
  });

  it('defaults to archive, and asks for the statement before random', () => {
    expect(resolveLabelOptions({ labelField: 'label' })).toEqual({
      field: 'label',
      draw: 'archive',
      uniformSample: false,
    });
    expect(() => resolveLabelOptions({ labelField: 'label', labelDraw: 'random' })).toThrow(LabelOptionsError);
    expect(() => resolveLabelOptions({ labelField: 'label', labelDraw: 'random', uniformSample: 'false' })).toThrow(
      /needs uniformSample=true/,
    );
    expect(resolveLabelOptions({ labelField: 'label' }, { labelDraw: 'random', uniformSample: 'true' })).toEqual({
      field: 'label',
      draw: 'random',
      uniformSample: true,
    });
    expect(() => resolveLabelOptions({ labelField: 'label', uniformSample: 'true' })).toThrow(
      /applies only with labelDraw=random/,
    );
    expect(() => resolveLabelOptions({ labelField: 'label', uniformSample: 'yes' })).toThrow(/true or false/);
  });

  it('refuses item fields, reserved names, and a query and a form that disagree', () => {
    expect(() => resolveLabelOptions({ labelField: 'text' })).toThrow(/item field/);
    expect(() => resolveLabelOptions({ labelField: 'Verdict' })).toThrow(/reserved/);
    // `meta` is an item field in JSON, a plain column in CSV.
    expect(() => resolveLabelOptions({ labelField: 'meta' }, {}, 'json')).toThrow(/item field/);
    expect(resolveLabelOptions({ labelField: 'meta' }, {}, 'csv')?.field).toBe('meta');
    expect(() => resolveLabelOptions({ labelField: 'label' }, { labelField: 'cat' })).toThrow(/given twice/);
    expect(resolveLabelOptions({ labelField: 'label' }, { labelField: 'label' })?.field).toBe('label');
    expect(() => resolveLabelOptions({ labelField: ['a', 'b'] as unknown as string })).toThrow(/more than once/);
  });
});

describe('takeLabel', () => {
  const cats = ['threat', 'harassment', 'ok'];

  it('takes the label out of the metadata, trims it, and leaves blank or missing labels open', () => {
    const meta: Record<string, unknown> = { label: ' ok ', board: 'general' };
    expect(takeLabel(meta, 'label', cats)).toEqual({ category: 'ok' });
    expect(meta).toEqual({ board: 'general' });
    expect(takeLabel({ label: '' }, 'label', cats)).toEqual({ category: null });
    expect(takeLabel({ label: null }, 'label', cats)).toEqual({ category: null });
    expect(takeLabel({}, 'label', cats)).toEqual({ category: null });
  });

  it('names a label that is not a category, and a value that is not text', () => {
    expect(takeLabel({ label: 'Ok' }, 'label', cats)).toEqual({
      reason: `label 'label' is "Ok", which is not a category of this desk (threat, harassment, ok)`,
    });
    expect(takeLabel({ label: 3 }, 'label', cats)).toEqual({
      reason: "label 'label' must be a category name, got number",
    });
  });
});
