/**
 * The life of a queue item lives in shared/schemas/item-states.ts so the server uses the same
 * names; the client reads it from here.
 */
export { itemStates, type ItemState } from '../../../shared/schemas/item-states';
