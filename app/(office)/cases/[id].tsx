export { CaseScreen as default } from '../../../components/features/cases/case-screen';
