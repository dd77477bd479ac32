/** Serial ports: discovery and the serial LineSource. */
export { createSerialSource, type SerialSourceOptions } from './serial-source';
export { listPorts, PortListError, describeListError, byIdLinks, BY_ID_DIR, type PortEntry } from './list';
