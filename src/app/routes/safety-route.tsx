import { SafetyPanel } from '../../components/safety-panel';

/** The whole probing-safety panel on a page of its own, for the short cautions to link to. */
export function SafetyRoute() {
  return (
    <div className="mx-auto max-w-2xl space-y-4">
      <h1 className="text-xl font-semibold">Probing old serial hardware</h1>
      <p className="text-sm text-muted">
        A damaged frame often sends you back to the machine to look at a clock edge or a data line. These are the usual cautions for clipping a
        logic analyzer onto equipment of the era.
      </p>
      <SafetyPanel />
      <p className="text-sm text-muted">
        What to probe: the serial controller's transmit and receive clock pins, its transmit and receive data pins and the request-to-send and
        clear-to-send lines, on the logic side of the line drivers and receivers rather than on the connector.
      </p>
    </div>
  );
}
