export { ProgrammeScreen as default } from '../../components/features/programme/programme-screen';
