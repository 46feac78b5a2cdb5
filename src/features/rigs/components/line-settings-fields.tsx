import type { LineSettings } from '../../../../shared/schemas';
import { SelectField, TextField } from '../../../components/field';
import type { FieldErrors } from '../../../lib/form';
import { bitOrderLabels, clockEdgeLabels, encodingLabels } from '../../../lib/format';

function options<K extends string>(labels: Record<K, string>) {
  return (Object.keys(labels) as K[]).map((value) => ({ value, label: labels[value] }));
}

/** Inputs named `lineSettings.*`, so readForm nests them the way rigInputSchema expects. */
export function LineSettingsFields({ defaults, errors }: { defaults?: LineSettings; errors: FieldErrors }) {
  return (
    <fieldset className="grid gap-4 sm:grid-cols-2">
      <legend className="mb-2 text-sm font-semibold text-muted">Line settings</legend>
      <TextField
        label="Bit rate (bit/s)"
        name="lineSettings.bitRate"
        inputMode="numeric"
        defaultValue={defaults?.bitRate ?? 800000}
        error={errors['lineSettings.bitRate']}
        hint="e.g. 800000 for a 4 MHz clock divided by 5"
        className="font-mono"
      />
      <SelectField
        label="Encoding"
        name="lineSettings.encoding"
        defaultValue={defaults?.encoding ?? 'nrz'}
        options={options(encodingLabels)}
        error={errors['lineSettings.encoding']}
      />
      <SelectField
        label="Clock edge"
        name="lineSettings.clockEdge"
        defaultValue={defaults?.clockEdge ?? 'rising'}
        options={options(clockEdgeLabels)}
        error={errors['lineSettings.clockEdge']}
        hint="The edge on which data is sampled"
      />
      <SelectField
        label="Bit order"
        name="lineSettings.bitOrder"
        defaultValue={defaults?.bitOrder ?? 'lsb-first'}
        options={options(bitOrderLabels)}
        error={errors['lineSettings.bitOrder']}
      />
    </fieldset>
  );
}
