import { LabIcon } from '@jupyterlab/ui-components';

import wavebenchSvg from '../style/icons/wavebench.svg';
import campaignsSvg from '../style/icons/campaigns.svg';

export const wavebenchIcon = new LabIcon({
  name: 'wavebench:wave-gauge',
  svgstr: wavebenchSvg
});

export const campaignsIcon = new LabIcon({
  name: 'wavebench:campaigns',
  svgstr: campaignsSvg
});
