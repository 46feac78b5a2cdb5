import type { LinkDirectionName } from '../../../shared/schemas';

export const directionWords: Record<LinkDirectionName, string> = {
  'to-server': 'station → server',
  'from-server': 'server → station',
  unknown: 'not known',
};
