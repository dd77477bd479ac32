export * from './channels';
export * from './requests';
export * from './pushes';
export * from './payloads';
